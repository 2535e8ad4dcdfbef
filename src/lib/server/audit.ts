/**
 * The audit trail: every admin or photographer action that changes money, rights or roles writes one
 * row — who, what, when, before and after — inside the same transaction as the change, so a change
 * without its record (or a record without its change) cannot exist. Rows are never updated or deleted
 * (the table has triggers that refuse both).
 */
import type { Transaction } from 'sequelize';
import { AuditEvent } from './models';
import type { AuditView } from '../audit-types';

export type { AuditView };

/** The actions the trail knows, with the words the order and account pages show. */
export const AUDIT_ACTIONS = {
  'order.move': 'Order moved',
  'refund.request': 'Refund requested',
  'refund.settle': 'Refund settled by the payment service',
  'refund.fail': 'Refund failed at the payment service',
  'licence.revoke': 'Licence revoked',
  'edition.return': 'Edition number returned to the edition',
  'lab.prepare': 'Lab pack prepared',
  'quote.answer': 'Licence quote answered',
  'quote.decline': 'Licence enquiry declined',
  'price.licence': 'Licence price changed',
  'price.print': 'Print offer changed',
  'edition.change': 'Edition changed',
  'work.rights': 'Rights status changed',
  'settings.money': 'Shop money settings changed',
  'tier.change': 'Licence tier changed',
  'role.change': 'Role changed',
  'account.disable': 'Account disabled',
  'account.enable': 'Account enabled',
} as const;
export type AuditAction = keyof typeof AUDIT_ACTIONS;

/** Who did it. `null` is the system itself (the payment service's events). */
export interface AuditActor { id: string; email: string }

export interface AuditEntry {
  action: AuditAction;
  subjectType: 'order' | 'order_line' | 'refund' | 'licence' | 'edition_number' | 'quote' | 'work' | 'print_offer' | 'edition' | 'settings' | 'licence_tier' | 'user';
  subjectId: string | number;
  orderId?: number | null;
  userId?: string | null;
  before?: Record<string, unknown> | null;
  after?: Record<string, unknown> | null;
}

export async function recordAudit(actor: AuditActor | null, entry: AuditEntry, transaction?: Transaction): Promise<void> {
  await AuditEvent.create(
    {
      actorId: actor?.id ?? null,
      actorEmail: actor?.email ?? null,
      action: entry.action,
      subjectType: entry.subjectType,
      subjectId: String(entry.subjectId),
      orderId: entry.orderId ?? null,
      userId: entry.userId ?? null,
      before: entry.before ?? null,
      after: entry.after ?? null,
    },
    { transaction },
  );
}

/** Flattens before/after into the fields that differ, so the page lists "status: paid → shipped". */
export function diffFields(before: Record<string, unknown> | null, after: Record<string, unknown> | null): AuditView['changes'] {
  const keys = [...new Set([...Object.keys(before ?? {}), ...Object.keys(after ?? {})])];
  return keys
    .filter((k) => JSON.stringify(before?.[k] ?? null) !== JSON.stringify(after?.[k] ?? null))
    .map((k) => ({ field: k, before: before?.[k] ?? null, after: after?.[k] ?? null }));
}

function view(e: AuditEvent): AuditView {
  return {
    id: e.id,
    at: e.createdAt.toISOString(),
    actor: e.actorEmail ?? 'payment service',
    action: e.action,
    label: AUDIT_ACTIONS[e.action as AuditAction] ?? e.action,
    subject: `${e.subjectType} ${e.subjectId}`,
    changes: diffFields(e.before, e.after),
  };
}

export async function auditForOrder(orderId: number): Promise<AuditView[]> {
  return (await AuditEvent.findAll({ where: { orderId }, order: [['createdAt', 'ASC'], ['id', 'ASC']] })).map(view);
}

export async function auditForUser(userId: string): Promise<AuditView[]> {
  return (await AuditEvent.findAll({ where: { userId }, order: [['createdAt', 'DESC'], ['id', 'DESC']], limit: 200 })).map(view);
}

export async function auditByActor(actorId: string): Promise<AuditView[]> {
  return (await AuditEvent.findAll({ where: { actorId }, order: [['createdAt', 'DESC'], ['id', 'DESC']], limit: 200 })).map(view);
}
