/** Dispatch → People: accounts, their roles, and disabling them (which ends their sessions at once). */
import { QueryTypes } from 'sequelize';
import { auth } from './auth';
import { db } from './db';
import { recordAudit } from './audit';
import { isRole, type Role } from '../roles';
import type { PersonChange, PersonRow } from '../people-schemas';

export class PeopleError extends Error {
  constructor(readonly status: number, readonly code: string, message: string) {
    super(message);
  }
}

export async function listPeople(): Promise<PersonRow[]> {
  const rows = await db().query<Record<string, unknown>>(
    `SELECT u.id, u.name, u.email, u.role, u.email_verified, u.banned, u.created_at,
            (SELECT COUNT(*) FROM sessions s WHERE s.user_id = u.id AND s.expires_at > $1) AS active_sessions
       FROM users u ORDER BY u.created_at DESC`,
    { bind: [new Date().toISOString()], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    id: String(r.id),
    name: String(r.name),
    email: String(r.email),
    role: isRole(r.role) ? r.role : 'buyer',
    emailVerified: Boolean(r.email_verified),
    disabled: Boolean(r.banned),
    createdAt: String(r.created_at),
    activeSessions: Number(r.active_sessions),
  }));
}

/**
 * Applies an admin's change through better-auth's admin API (so its own checks run too).
 * An admin may not demote or disable themselves: the shop must never lock out its last manager.
 */
export async function changePerson(adminId: string, userId: string, change: PersonChange, requestHeaders: Headers, adminEmail = ''): Promise<PersonRow> {
  const people = await listPeople();
  const person = people.find((p) => p.id === userId);
  if (!person) throw new PeopleError(404, 'not_found', 'No such account.');
  if (userId === adminId && ((change.role && change.role !== 'admin') || change.disabled)) {
    throw new PeopleError(409, 'self_lockout', 'You cannot remove your own admin role or disable your own account.');
  }
  const api = auth().api;
  const headers = requestHeaders;
  if (change.role && change.role !== person.role) {
    await api.setRole({ body: { userId, role: change.role as Role }, headers });
  }
  if (change.disabled === true && !person.disabled) {
    await api.banUser({ body: { userId, banReason: change.reason || 'Disabled in Dispatch' }, headers });
  } else if (change.disabled === false && person.disabled) {
    await api.unbanUser({ body: { userId }, headers });
  }
  const after = (await listPeople()).find((p) => p.id === userId)!;
  // better-auth makes the change with its own writes; the trail records what it left behind.
  const actor = { id: adminId, email: adminEmail };
  if (after.role !== person.role) {
    await recordAudit(actor, { action: 'role.change', subjectType: 'user', subjectId: userId, userId, before: { role: person.role }, after: { role: after.role } });
  }
  if (after.disabled !== person.disabled) {
    await recordAudit(actor, {
      action: after.disabled ? 'account.disable' : 'account.enable', subjectType: 'user', subjectId: userId, userId,
      before: { disabled: person.disabled }, after: { disabled: after.disabled, ...(after.disabled && change.reason ? { reason: change.reason } : {}) },
    });
  }
  return after;
}
