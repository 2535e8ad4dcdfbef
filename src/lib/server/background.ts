/**
 * Work a server process does beside its requests, started once per process (the middleware calls this on
 * every request; only the first call does anything): the mail outbox's retry loop, and the sweep of
 * uploads a dead process left half-done, now and every ten minutes. No timer keeps the process alive.
 */
import { startMailOutbox, type OutboxTiming } from './mail';
import { STALE_AFTER_MS, sweepUploads } from './upload-sweep';

export interface BackgroundOptions {
  mail?: Partial<OutboxTiming>;
  /** Time between two upload sweeps. Default 10 min. */
  sweepEveryMs?: number;
  /** Age from which incoming/orphan entries are swept. Default 10 min. */
  sweepOlderThanMs?: number;
}

// On globalThis, so a module loaded twice (the dev server reloads modules) still starts one set.
const STARTED = Symbol.for('stillmark.background-work');

export function startBackgroundWork(options: BackgroundOptions = {}): void {
  const flags = globalThis as { [STARTED]?: boolean };
  if (flags[STARTED]) return;
  flags[STARTED] = true;
  startMailOutbox(options.mail);
  const sweep = () =>
    sweepUploads({ olderThanMs: options.sweepOlderThanMs ?? STALE_AFTER_MS })
      .then(({ removed, orphaned }) => {
        if (removed.length || orphaned.length) {
          console.warn(`upload sweep: removed ${removed.length} left-over entries${orphaned.length ? `, moved ${orphaned.length} unreferenced originals to uploads/orphaned` : ''}`);
        }
      })
      .catch((error: unknown) => console.error('upload sweep failed', error));
  void sweep();
  setInterval(() => void sweep(), options.sweepEveryMs ?? 10 * 60_000).unref();
}
