import { useRef, useState, type DragEvent } from 'react';
import { formatBytes } from '@/lib/format';

const ACCEPT = '.json,.csv,.hl7,.txt,application/json,text/csv';
/** Generous ceiling for a capture; the gateway answers 413 above its own limit anyway. */
const MAX_BYTES = 50 * 1024 * 1024;

/** Drag-and-drop (or browse) for one capture file: JSON batch, CSV or HL7 v2 messages. */
export function DropZone({ file, onFile, disabled }: { file: File | null; onFile: (f: File | null) => void; disabled?: boolean }) {
  const input = useRef<HTMLInputElement>(null);
  const [over, setOver] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);

  const take = (f: File | undefined) => {
    if (!f) return;
    if (f.size > MAX_BYTES) {
      setProblem(`${f.name} is ${formatBytes(f.size)}; captures up to ${formatBytes(MAX_BYTES)} can be previewed.`);
      return;
    }
    setProblem(null);
    onFile(f);
  };
  const onDrop = (e: DragEvent) => {
    e.preventDefault();
    setOver(false);
    if (!disabled) take(e.dataTransfer.files[0]);
  };

  return (
    <div>
      <div
        onDragOver={(e) => {
          e.preventDefault();
          setOver(true);
        }}
        onDragLeave={() => setOver(false)}
        onDrop={onDrop}
        data-testid="drop-zone"
        className={`flex min-h-28 flex-col items-center justify-center gap-1 rounded-md border-2 border-dashed px-4 py-5 text-center text-sm transition-colors ${over ? 'border-ink-600 bg-ink-50' : 'border-line bg-white'}`}
      >
        {file ? (
          <p>
            <span className="font-medium">{file.name}</span> <span className="text-muted">· {formatBytes(file.size)}</span>
          </p>
        ) : (
          <p className="font-medium text-ink-900">Drop a capture here</p>
        )}
        <p className="text-xs text-muted">JSON batch (as sent to /ingest/batches), CSV with a time column, or HL7 v2 messages</p>
        <div className="mt-1 flex gap-2">
          <button
            type="button"
            disabled={disabled}
            className="rounded border border-line bg-white px-2 py-0.5 text-xs hover:bg-ink-50"
            onClick={() => input.current?.click()}
          >
            {file ? 'Choose another file' : 'Browse…'}
          </button>
          {file && (
            <button type="button" disabled={disabled} className="px-2 py-0.5 text-xs text-ink-700 underline" onClick={() => onFile(null)}>
              Remove
            </button>
          )}
        </div>
        <input
          ref={input}
          type="file"
          accept={ACCEPT}
          className="sr-only"
          aria-label="Capture file"
          tabIndex={-1}
          onChange={(e) => {
            take(e.target.files?.[0]);
            e.target.value = '';
          }}
        />
      </div>
      {problem && (
        <p role="alert" className="mt-1 text-xs text-error">
          {problem}
        </p>
      )}
    </div>
  );
}
