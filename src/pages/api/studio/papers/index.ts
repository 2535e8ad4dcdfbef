import { paperInput } from '~/lib/settings-schemas';
import { collectionRoutes } from '~/lib/server/studio-collection-routes';
import { createPaper, listPapers } from '~/lib/server/settings';

/** Every paper (active or not) in the shop's order; POST adds one, its slug made from its name (409 when taken). */
export const { GET, POST } = collectionRoutes({ key: 'paper', code: 'invalid_paper', input: paperInput, list: listPapers, create: createPaper });
