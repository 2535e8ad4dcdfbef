import { printSizePatch } from '~/lib/settings-schemas';
import { itemRoutes } from '~/lib/server/studio-collection-routes';
import { deleteSize, updateSize } from '~/lib/server/settings';

/** PATCH changes some fields (the result must pass the whole schema); DELETE removes it, or sets it inactive when anything refers to it. */
export const { PATCH, DELETE } = itemRoutes({ key: 'size', code: 'invalid_size', missing: 'No such print size.', patch: printSizePatch, update: updateSize, remove: deleteSize });
