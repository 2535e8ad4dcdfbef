import { paperPatch } from '~/lib/settings-schemas';
import { itemRoutes } from '~/lib/server/studio-collection-routes';
import { deletePaper, updatePaper } from '~/lib/server/settings';

/** PATCH changes some fields (the result must pass the whole schema); DELETE removes it, or sets it inactive when anything refers to it. */
export const { PATCH, DELETE } = itemRoutes({ key: 'paper', code: 'invalid_paper', missing: 'No such paper.', patch: paperPatch, update: updatePaper, remove: deletePaper });
