/** The two accounts the fault tests act as (the fault app reads `X-Test-User` instead of a session). */
import type { SessionUser } from '../../src/lib/server/auth-types';

export const TEST_USERS: Record<'buyer' | 'photographer', SessionUser> = {
  buyer: { id: 'fault-buyer', email: 'buyer@example.test', name: 'Fault Buyer', role: 'buyer', emailVerified: true },
  photographer: { id: 'fault-photographer', email: 'studio@example.test', name: 'Fault Studio', role: 'photographer', emailVerified: true },
};
