/** One audit row as pages show it: who, what, when, and each field that changed. */
export interface AuditView {
  id: number;
  at: string;
  actor: string;
  action: string;
  label: string;
  subject: string;
  changes: { field: string; before: unknown; after: unknown }[];
}

/** A value from an audit row in words: money stays minor units here, as stored. */
export function auditValue(value: unknown): string {
  if (value === null || value === undefined || value === '') return '—';
  if (Array.isArray(value)) return value.length ? value.map(auditValue).join(', ') : '—';
  if (typeof value === 'object') return JSON.stringify(value);
  return String(value);
}
