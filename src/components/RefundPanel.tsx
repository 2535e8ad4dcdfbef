import { useMemo, useState } from 'react';
import { formatMoney, parseMajorUnits, toMajorUnitsText } from '~/lib/money';
import { REFUND_REASONS, type RefundReason } from '~/lib/refund-schemas';

export interface RefundablePart {
  /** null = shipping */
  lineId: number | null;
  label: string;
  /** What refunding all that is left takes back, in words ("the licence is revoked"). */
  consequence: string | null;
  refundable: number;
}

type Props = { number: string; currency: string; parts: RefundablePart[] };

type Choice = { on: boolean; amount: string };

function newKey(): string {
  return crypto.randomUUID();
}

/**
 * Dispatch's refund form: whole order or chosen lines (with an amount each), a reason, a review step,
 * then one request whose idempotency key is made when the form opens, so a repeated click or a retry
 * after a network failure can never refund twice.
 */
export default function RefundPanel({ number, currency, parts }: Props) {
  const [open, setOpen] = useState(false);
  const [choices, setChoices] = useState<Choice[]>(() => parts.map((p) => ({ on: false, amount: toMajorUnitsText(p.refundable, currency) })));
  const [reason, setReason] = useState<RefundReason>('requested_by_customer');
  const [note, setNote] = useState('');
  const [reviewing, setReviewing] = useState(false);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const [key, setKey] = useState(newKey);

  const money = (n: number) => formatMoney(n, currency);
  const parsed = useMemo(() => choices.map((c, i) => {
    if (!c.on) return { amount: 0, problem: null as string | null };
    const amount = parseMajorUnits(c.amount, currency);
    const max = parts[i]!.refundable;
    if (amount === null || amount < 1) return { amount: 0, problem: 'Type an amount, e.g. ' + toMajorUnitsText(max, currency) };
    if (amount > max) return { amount: 0, problem: `At most ${money(max)}` };
    return { amount, problem: null };
  }), [choices, currency, parts]);
  const total = parsed.reduce((sum, p) => sum + p.amount, 0);
  const chosen = choices.some((c) => c.on);
  const valid = chosen && parsed.every((p) => p.problem === null) && total > 0;
  const whole = parts.every((p, i) => p.refundable === 0 || (choices[i]!.on && parsed[i]!.amount === p.refundable));

  const set = (i: number, change: Partial<Choice>) => {
    setChoices((all) => all.map((c, j) => (j === i ? { ...c, ...change } : c)));
    setReviewing(false);
    // A different request deserves a different key; the same one resent keeps its key.
    setKey(newKey());
  };

  async function submit() {
    setBusy(true);
    setError(null);
    const items = parts.flatMap((p, i) => (choices[i]!.on ? [{ lineId: p.lineId, amount: parsed[i]!.amount }] : []));
    const body = whole ? { idempotencyKey: key, reason, note, whole: true } : { idempotencyKey: key, reason, note, items };
    try {
      const response = await fetch(`/api/dispatch/orders/${encodeURIComponent(number)}/refunds`, {
        method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body),
      });
      const answer = await response.json().catch(() => null);
      if (!response.ok) {
        setError(answer?.error?.message ?? `The shop answered ${response.status}.`);
        setBusy(false);
        return;
      }
      setDone(`Refund of ${money(answer.amount)} sent to the payment service. This page updates when it is confirmed.`);
      await waitForSettlement();
    } catch {
      // The key stays the same, so pressing again finishes this refund rather than making another.
      setError('The shop could not be reached. Press the button again: the same refund is sent, never a second one.');
      setBusy(false);
    }
  }

  async function waitForSettlement() {
    for (let attempt = 0; attempt < 40; attempt++) {
      await new Promise((r) => setTimeout(r, 500));
      const response = await fetch(`/api/dispatch/orders/${encodeURIComponent(number)}`);
      if (!response.ok) continue;
      const order = (await response.json()) as { refunds: { status: string }[] };
      if (order.refunds.every((r) => r.status !== 'pending')) break;
    }
    window.location.reload();
  }

  if (parts.every((p) => p.refundable === 0)) return <p className="text-ink-soft">Nothing is left to refund.</p>;
  if (!open) return <button type="button" className="btn-quiet" onClick={() => setOpen(true)}>Refund…</button>;

  return (
    <form className="space-y-4" data-testid="refund-panel" onSubmit={(e) => { e.preventDefault(); if (reviewing) void submit(); else if (valid) setReviewing(true); }}>
      <fieldset className="space-y-3">
        <legend className="mb-1 text-sm font-medium">What to refund</legend>
        {parts.map((p, i) => (
          <div key={p.lineId ?? 'shipping'} className={p.refundable === 0 ? 'opacity-50' : ''}>
            <label className="flex items-start gap-2 text-sm">
              <input type="checkbox" className="mt-1" disabled={p.refundable === 0 || busy} checked={choices[i]!.on} onChange={(e) => set(i, { on: e.target.checked })} />
              <span>
                {p.label}
                <span className="block text-xs text-ink-soft">{p.refundable === 0 ? 'Nothing left to refund' : `Up to ${money(p.refundable)}`}</span>
              </span>
            </label>
            {choices[i]!.on && (
              <div className="ml-6 mt-1">
                <label className="block text-xs">
                  <span className="sr-only">Amount for {p.label}</span>
                  <input className="field w-32 tabular-nums" inputMode="decimal" value={choices[i]!.amount} disabled={busy} aria-invalid={parsed[i]!.problem ? true : undefined} onChange={(e) => set(i, { amount: e.target.value })} /> <span className="text-ink-soft">{currency}</span>
                </label>
                {parsed[i]!.problem && <p className="text-xs text-ember">{parsed[i]!.problem}</p>}
                {p.consequence && parsed[i]!.amount === p.refundable && <p className="text-xs text-ink-soft">Refunded in full: {p.consequence}.</p>}
              </div>
            )}
          </div>
        ))}
        <button type="button" className="text-xs underline" disabled={busy} onClick={() => { setChoices(parts.map((p) => ({ on: p.refundable > 0, amount: toMajorUnitsText(p.refundable, currency) }))); setReviewing(false); setKey(newKey()); }}>
          Choose everything left
        </button>
      </fieldset>
      <label className="block text-sm">
        <span className="mb-1 block">Reason</span>
        <select className="field" value={reason} disabled={busy} onChange={(e) => { setReason(e.target.value as RefundReason); setReviewing(false); setKey(newKey()); }}>
          {Object.entries(REFUND_REASONS).map(([value, label]) => <option key={value} value={value}>{label}</option>)}
        </select>
      </label>
      <label className="block text-sm">
        <span className="mb-1 block">Note for the buyer (optional)</span>
        <textarea className="field" rows={2} maxLength={500} value={note} disabled={busy} onChange={(e) => { setNote(e.target.value); setReviewing(false); setKey(newKey()); }} />
      </label>
      {reviewing && (
        <p className="rounded-sm border border-ember p-3 text-sm" data-testid="refund-review">
          Refund <strong>{money(total)}</strong> to the buyer’s card{whole ? ' — the whole order' : ''}? This cannot be undone.
        </p>
      )}
      <div className="flex flex-wrap gap-2">
        <button type="submit" className="btn-primary" disabled={!valid || busy}>{reviewing ? `Refund ${money(total)}` : 'Review refund'}</button>
        <button type="button" className="btn-quiet" disabled={busy} onClick={() => { setOpen(false); setReviewing(false); }}>Cancel</button>
      </div>
      {error && <p role="alert" className="text-sm text-ember">{error}</p>}
      {done && <p role="status" className="text-sm">{done}</p>}
    </form>
  );
}
