import { licenceTierInput } from '~/lib/settings-schemas';
import { collectionRoutes } from '~/lib/server/studio-collection-routes';
import { createTier, listTiers } from '~/lib/server/settings';

/** Every tier (active or not) in the shop's order; POST adds one, its slug made from its name (409 when taken). */
export const { GET, POST } = collectionRoutes({ key: 'tier', code: 'invalid_tier', input: licenceTierInput, list: listTiers, create: createTier });
