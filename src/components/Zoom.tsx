import { useRef, useState, type PointerEvent } from 'react';

type Props = { src: string; width: number; height: number; alt: string };

/** Opens the largest preview in a dialog; moving the pointer (or the arrow keys) pans across it. */
export default function Zoom({ src, width, height, alt }: Props) {
  const dialog = useRef<HTMLDialogElement>(null);
  const [origin, setOrigin] = useState({ x: 50, y: 50 });

  function pan(event: PointerEvent<HTMLDivElement>) {
    const box = event.currentTarget.getBoundingClientRect();
    setOrigin({ x: ((event.clientX - box.left) / box.width) * 100, y: ((event.clientY - box.top) / box.height) * 100 });
  }
  function keys(event: React.KeyboardEvent) {
    const step = 8;
    const moves: Record<string, [number, number]> = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, -step], ArrowDown: [0, step] };
    const move = moves[event.key];
    if (!move) return;
    event.preventDefault();
    setOrigin((o) => ({ x: Math.min(100, Math.max(0, o.x + move[0])), y: Math.min(100, Math.max(0, o.y + move[1])) }));
  }

  return (
    <>
      <button type="button" className="btn-quiet" onClick={() => dialog.current?.showModal()}>Zoom in</button>
      <dialog ref={dialog} className="m-auto h-[92vh] w-[94vw] max-w-none bg-paper p-0 text-ink backdrop:bg-ink/70" aria-label={`Zoomed preview: ${alt}`} onKeyDown={keys}>
        <div className="flex h-full flex-col">
          <div className="flex items-center justify-between border-b border-rule px-4 py-2 text-sm">
            <span className="text-ink-soft">Move the pointer or use the arrow keys to look around.</span>
            <button type="button" className="btn-quiet" onClick={() => dialog.current?.close()} autoFocus>Close</button>
          </div>
          <div className="relative flex-1 cursor-crosshair overflow-hidden bg-mat" onPointerMove={pan}>
            {/* Lazy: inside the closed dialog it is not fetched until the dialog opens (it is the largest preview). */}
            <img
              src={src}
              alt={alt}
              width={width}
              height={height}
              loading="lazy"
              decoding="async"
              className="absolute inset-0 h-full w-full object-contain"
              style={{ transform: 'scale(2.2)', transformOrigin: `${origin.x}% ${origin.y}%` }}
            />
          </div>
        </div>
      </dialog>
    </>
  );
}
