import { useEffect, useState } from 'react';
import { LAB_FORMAT_LABEL, type LabPackView } from '~/lib/lab-pack';

type Props = {
  number: string;
  lineId: number;
  pack: LabPackView | null;
  /** Why the line cannot be prepared now; null when it can. */
  refusal: string | null;
};

const when = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit', timeZone: 'UTC' });
const count = new Intl.NumberFormat('en-GB');

function megabytes(bytes: number): string {
  return `${(bytes / 1_000_000).toFixed(bytes < 10_000_000 ? 1 : 0)} MB`;
}

/** Seconds since `busy` became true, for the busy message. */
function useElapsed(busy: boolean): number {
  const [seconds, setSeconds] = useState(0);
  useEffect(() => {
    if (!busy) return;
    setSeconds(0);
    const started = Date.now();
    const timer = window.setInterval(() => setSeconds(Math.floor((Date.now() - started) / 1000)), 500);
    return () => window.clearInterval(timer);
  }, [busy]);
  return seconds;
}

/** One print line's lab pack on the Dispatch order page: prepare it, then download the file and the job sheet. */
export default function LabPackButton({ number, lineId, pack: initial, refusal }: Props) {
  const [pack, setPack] = useState(initial);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const elapsed = useElapsed(busy);

  async function prepare() {
    setBusy(true);
    setError(null);
    try {
      const response = await fetch(`/api/dispatch/orders/${encodeURIComponent(number)}/lines/${lineId}/lab-pack`, {
        // JSON, like every API write here: a bodiless POST reads as a form post to Astro's origin check.
        method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}',
      });
      const answer = await response.json().catch(() => null);
      if (response.ok && answer?.pack) setPack(answer.pack as LabPackView);
      else setError(answer?.error?.message ?? `The shop answered ${response.status}; nothing was changed.`);
    } catch {
      setError('The shop could not be reached; nothing was changed. Try again.');
    } finally {
      setBusy(false);
    }
  }

  return (
    <div className="mt-2 space-y-2 text-xs" data-testid="lab-pack">
      {pack && (
        <div className="rounded-sm border border-rule bg-paper-raised px-3 py-2" data-testid="lab-pack-ready">
          <p className="font-medium text-ink">Lab pack ready</p>
          <p className="text-ink-soft tabular-nums" data-testid="lab-pack-facts">
            {count.format(pack.widthPx)} × {count.format(pack.heightPx)} px at {pack.ppi} ppi · {LAB_FORMAT_LABEL[pack.format]} · {megabytes(pack.bytes)}
          </p>
          <p className="text-ink-soft">Prepared {when.format(new Date(pack.preparedAt))} UTC</p>
          <p className="mt-1 flex flex-wrap gap-x-4 gap-y-1">
            <a href={pack.fileUrl} download={pack.fileName} className="text-ember underline" data-testid="lab-pack-file">Print file</a>
            <a href={pack.sheetUrl} className="text-ember underline" data-testid="lab-pack-sheet">Job sheet (PDF)</a>
          </p>
          <p className="mt-1 break-all font-mono text-[0.7rem] text-ink-soft">{pack.fileName}</p>
        </div>
      )}
      {refusal ? (
        !pack && <p className="text-ink-soft" data-testid="lab-pack-refusal">{refusal}</p>
      ) : (
        <div className="flex flex-wrap items-center gap-3">
          <button type="button" className={pack ? 'btn-quiet px-3 py-1 text-xs' : 'btn-primary px-3 py-1 text-xs'} disabled={busy} aria-busy={busy} onClick={prepare}>
            {busy ? 'Preparing…' : pack ? 'Prepare again' : 'Prepare for the lab'}
          </button>
          {busy && (
            <span role="status" className="flex items-center gap-2 text-ink-soft">
              <span aria-hidden="true" className="inline-block h-3 w-3 animate-spin rounded-full border-2 border-rule border-t-ember" />
              Making the print file and job sheet{elapsed > 0 ? ` · ${elapsed} s` : ''}
            </span>
          )}
        </div>
      )}
      {error && <p role="alert" className="text-ember">{error}</p>}
    </div>
  );
}
