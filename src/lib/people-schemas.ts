import { z } from 'zod';
import { ROLES } from './roles';

/** An admin's change to one account: a new role, and/or disabling or enabling it. */
export const personChange = z
  .object({ role: z.enum(ROLES).optional(), disabled: z.boolean().optional(), reason: z.string().trim().max(200).optional() })
  .refine((v) => v.role !== undefined || v.disabled !== undefined, { message: 'Say what to change: role or disabled.' });
export type PersonChange = z.infer<typeof personChange>;

export interface PersonRow {
  id: string;
  name: string;
  email: string;
  role: (typeof ROLES)[number];
  emailVerified: boolean;
  disabled: boolean;
  createdAt: string;
  activeSessions: number;
}
