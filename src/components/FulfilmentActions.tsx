import { useState } from 'react';
import { CARRIERS, CARRIER_IDS, type Carrier } from '~/lib/tracking';

type Step = 'in_production' | 'shipped' | 'delivered';
type Props = { number: string; steps: Step[] };

const LABEL: Record<Step, string> = { in_production: 'Start production', shipped: 'Mark as shipped', delivered: 'Mark as delivered' };

/** The next fulfilment step for a print order; shipping asks for the carrier and tracking number. */
export default function FulfilmentActions({ number, steps }: Props) {
  const [carrier, setCarrier] = useState<Carrier>('royal-mail');
  const [tracking, setTracking] = useState('');
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);

  async function go(to: Step) {
    setBusy(true);
    setError(null);
    const body = to === 'shipped' ? { to, carrier, trackingNumber: tracking } : { to };
    const response = await fetch(`/api/dispatch/orders/${encodeURIComponent(number)}/move`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });
    const answer = await response.json().catch(() => null);
    if (response.ok) window.location.reload();
    else {
      setError(answer?.error?.message ?? `The shop answered ${response.status}.`);
      setBusy(false);
    }
  }

  if (steps.length === 0) return null;
  return (
    <div className="space-y-3" data-testid="fulfilment-actions">
      {steps.includes('shipped') && (
        <div className="grid gap-2">
          <label className="block text-sm">
            <span className="mb-1 block">Carrier</span>
            <select className="field" value={carrier} onChange={(e) => setCarrier(e.target.value as Carrier)}>
              {CARRIER_IDS.map((c) => <option key={c} value={c}>{CARRIERS[c].name}</option>)}
            </select>
          </label>
          <label className="block text-sm">
            <span className="mb-1 block">Tracking number</span>
            <input className="field" value={tracking} onChange={(e) => setTracking(e.target.value)} placeholder={CARRIERS[carrier].example} />
          </label>
        </div>
      )}
      <div className="flex flex-wrap gap-2">
        {steps.map((step) => (
          <button key={step} type="button" className="btn-primary" disabled={busy} onClick={() => go(step)}>{LABEL[step]}</button>
        ))}
      </div>
      {error && <p role="alert" className="text-sm text-ember">{error}</p>}
    </div>
  );
}
