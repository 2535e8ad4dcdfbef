import { licenceTierPatch } from '~/lib/settings-schemas';
import { itemRoutes } from '~/lib/server/studio-collection-routes';
import { deleteTier, updateTier } from '~/lib/server/settings';

/** PATCH changes some fields (the result must pass the whole schema); DELETE removes it, or sets it inactive when anything refers to it. */
export const { PATCH, DELETE } = itemRoutes({ key: 'tier', code: 'invalid_tier', missing: 'No such licence tier.', patch: licenceTierPatch, update: updateTier, remove: deleteTier });
