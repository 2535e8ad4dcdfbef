import { printSizeInput } from '~/lib/settings-schemas';
import { collectionRoutes } from '~/lib/server/studio-collection-routes';
import { createSize, listSizes } from '~/lib/server/settings';

/** Every size (active or not) in the shop's order; POST adds one, its slug made from its name (409 when taken). */
export const { GET, POST } = collectionRoutes({ key: 'size', code: 'invalid_size', input: printSizeInput, list: listSizes, create: createSize });
