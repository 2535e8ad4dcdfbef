import { useCallback, useEffect, useRef, useState, type DragEvent } from 'react';
import { ACCEPT_ATTRIBUTE, ACCEPTED_TYPES_TEXT, formatBytes } from '~/lib/uploads';

type Props = {
  /** The server's limit, so an oversized file is refused here without sending it. */
  maxBytes?: number;
};

type Phase = 'waiting' | 'sending' | 'processing' | 'done' | 'duplicate' | 'failed';

interface Item {
  id: number;
  file: File;
  phase: Phase;
  sent: number;
  work?: { id: number; title: string };
  existing?: { id: number; title: string };
  message?: string;
}

/** A thin ember bar on a rule-coloured track, the same in every engine. */
const BAR =
  'block h-1.5 w-full appearance-none overflow-hidden rounded-full bg-rule [&::-webkit-progress-bar]:bg-rule [&::-webkit-progress-value]:bg-ember [&::-moz-progress-bar]:bg-ember';

/** Two files travel at once: enough to keep the line busy while the server makes the previous one's previews. */
const AT_ONCE = 2;

/** Sends one file as the raw request body; XMLHttpRequest because fetch reports no upload progress. */
function send(file: File, handlers: {
  onProgress: (sent: number) => void;
  onSent: () => void;
  onAnswer: (status: number, body: any) => void;
  onFailure: (message: string) => void;
}): XMLHttpRequest {
  const xhr = new XMLHttpRequest();
  xhr.open('POST', '/api/studio/uploads');
  xhr.setRequestHeader('Content-Type', 'application/octet-stream');
  xhr.setRequestHeader('X-File-Name', encodeURIComponent(file.name));
  xhr.responseType = 'json';
  xhr.upload.onprogress = (e) => handlers.onProgress(e.loaded);
  xhr.upload.onload = () => handlers.onSent();
  xhr.onload = () => handlers.onAnswer(xhr.status, xhr.response);
  xhr.onerror = () => handlers.onFailure('The connection was lost before the shop answered. Try this file again.');
  xhr.ontimeout = xhr.onerror;
  xhr.send(file);
  return xhr;
}

/** Studio upload: drop or choose originals; each gets its own row, sent two at a time. */
export default function UploadDropzone({ maxBytes }: Props) {
  const [items, setItems] = useState<Item[]>([]);
  const [over, setOver] = useState(false);
  const input = useRef<HTMLInputElement>(null);
  const nextId = useRef(1);
  const requests = useRef(new Map<number, XMLHttpRequest>());

  const update = useCallback((id: number, change: Partial<Item>) => {
    setItems((all) => all.map((item) => (item.id === id ? { ...item, ...change } : item)));
  }, []);

  const add = (files: FileList | File[] | null) => {
    if (!files) return;
    const added: Item[] = Array.from(files).map((file) => {
      const item: Item = { id: nextId.current++, file, phase: 'waiting', sent: 0 };
      if (file.size === 0) return { ...item, phase: 'failed', message: 'This file is empty.' };
      if (maxBytes && file.size > maxBytes) {
        return { ...item, phase: 'failed', message: `This file is larger than the ${formatBytes(maxBytes)} an upload may be.` };
      }
      return item;
    });
    setItems((all) => [...all, ...added]);
  };

  // Start waiting files while fewer than AT_ONCE are on their way; a failure only ends its own row.
  useEffect(() => {
    const busy = items.filter((i) => i.phase === 'sending' || i.phase === 'processing').length;
    const ready = items.filter((i) => i.phase === 'waiting' && !requests.current.has(i.id)).slice(0, Math.max(0, AT_ONCE - busy));
    for (const item of ready) {
      const finish = (change: Partial<Item>) => {
        requests.current.delete(item.id);
        update(item.id, change);
      };
      requests.current.set(item.id, send(item.file, {
        onProgress: (sent) => update(item.id, { sent }),
        onSent: () => update(item.id, { sent: item.file.size, phase: 'processing' }),
        onAnswer: (status, body) => {
          if (status === 201 && body?.work) finish({ phase: 'done', work: body.work });
          else if (status === 409 && body?.error?.existing) finish({ phase: 'duplicate', existing: body.error.existing });
          else finish({ phase: 'failed', message: body?.error?.message ?? `The shop could not take this file (${status}).` });
        },
        onFailure: (message) => finish({ phase: 'failed', message }),
      }));
      update(item.id, { phase: 'sending' });
    }
  }, [items, update]);

  useEffect(() => {
    const open = requests.current;
    return () => {
      for (const xhr of open.values()) xhr.abort();
    };
  }, []);

  const onDrop = (e: DragEvent<HTMLDivElement>) => {
    e.preventDefault();
    setOver(false);
    add(e.dataTransfer.files);
  };

  const isFinished = (i: Item) => i.phase === 'done' || i.phase === 'duplicate' || i.phase === 'failed';
  const finished = items.filter(isFinished);
  const active = items.length - finished.length;

  return (
    <div>
      <div
        onDragEnter={(e) => { e.preventDefault(); setOver(true); }}
        onDragOver={(e) => { e.preventDefault(); e.dataTransfer.dropEffect = 'copy'; }}
        onDragLeave={(e) => { if (!e.currentTarget.contains(e.relatedTarget as Node | null)) setOver(false); }}
        onDrop={onDrop}
        className={`flex flex-col items-center justify-center gap-3 rounded-sm border-2 border-dashed px-6 py-14 text-center transition-colors ${over ? 'border-ember bg-ember/5' : 'border-rule bg-paper-raised'}`}
        data-testid="upload-dropzone"
      >
        <p className="font-display text-2xl">Drop originals here</p>
        <p className="text-sm text-ink-soft">
          {ACCEPTED_TYPES_TEXT}{maxBytes ? `, up to ${formatBytes(maxBytes)} each` : ''}. Each becomes a draft work.
        </p>
        <button type="button" className="btn-primary mt-2" onClick={() => input.current?.click()}>Choose files…</button>
        <input
          ref={input}
          type="file"
          multiple
          accept={ACCEPT_ATTRIBUTE}
          className="sr-only"
          tabIndex={-1}
          aria-hidden="true"
          onChange={(e) => {
            add(e.currentTarget.files);
            e.currentTarget.value = ''; // the same file can be chosen again after a failure
          }}
          data-testid="upload-input"
        />
      </div>

      <p className="sr-only" aria-live="polite">
        {items.length > 0 ? `${finished.length} of ${items.length} files finished${active ? `, ${active} still going` : ''}.` : ''}
      </p>

      {items.length > 0 && (
        <>
          <div className="mt-8 flex items-baseline justify-between gap-4">
            <h2 className="font-display text-xl">This session’s uploads</h2>
            {finished.length > 0 && (
              <button type="button" className="btn-quiet" onClick={() => setItems((all) => all.filter((i) => !isFinished(i)))}>
                Clear finished
              </button>
            )}
          </div>
          <ul className="mt-3 divide-y divide-rule border-y border-rule" role="list" data-testid="upload-list">
            {items.map((item) => <UploadRow key={item.id} item={item} />)}
          </ul>
        </>
      )}
    </div>
  );
}

function UploadRow({ item }: { item: Item }) {
  const { file, phase } = item;
  const percent = file.size ? Math.round((item.sent / file.size) * 100) : 0;
  return (
    <li className="grid gap-2 py-4 sm:grid-cols-[minmax(0,1fr)_14rem] sm:items-center sm:gap-6" data-testid="upload-row" data-phase={phase}>
      <div className="min-w-0">
        <p className="truncate text-sm font-medium" title={file.name}>{file.name}</p>
        <p className="text-xs text-ink-soft">{formatBytes(file.size)}</p>
      </div>
      <div className="text-sm">
        {phase === 'waiting' && <p className="text-xs text-ink-soft">Waiting to send…</p>}
        {phase === 'sending' && (
          <>
            <progress
              className={BAR}
              max={file.size}
              value={item.sent}
              aria-label={`Sending ${file.name}`}
              aria-valuetext={`${percent} % sent`}
            />
            <p className="mt-1 text-xs text-ink-soft" aria-hidden="true">Sending · {percent} %</p>
          </>
        )}
        {phase === 'processing' && (
          <>
            <progress className={`${BAR} animate-pulse`} aria-label={`Processing ${file.name}`} />
            <p className="mt-1 text-xs text-ink-soft" role="status">Processing…</p>
          </>
        )}
        {phase === 'done' && item.work && (
          <p role="status">
            <span className="text-ink-soft">Draft created · </span>
            <a href={`/studio/works/${item.work.id}`} className="text-ember hover:text-ember-deep">Open “{item.work.title}”</a>
          </p>
        )}
        {phase === 'duplicate' && item.existing && (
          <p role="status">
            <span className="text-ink-soft">Already in the shop · </span>
            <a href={`/studio/works/${item.existing.id}`} className="text-ember hover:text-ember-deep">“{item.existing.title}”</a>
          </p>
        )}
        {phase === 'failed' && <p role="alert" className="text-ember-deep">{item.message}</p>}
      </div>
    </li>
  );
}
