import type { SweepSpeed, View } from './sweep';

interface Props {
  speed: SweepSpeed;
  speeds: readonly SweepSpeed[];
  onSpeed: (s: SweepSpeed) => void;
  zoom: number;
  onZoom: (z: number) => void;
  view: View;
  duration: number;
  onPan: (fraction: number) => void;
  onPosition: (min: number) => void;
  onFit: () => void;
}

const btn = 'rounded border border-line bg-white px-2 py-0.5 text-xs hover:bg-ink-50 disabled:opacity-40';

export function PlotToolbar({ speed, speeds, onSpeed, zoom, onZoom, view, duration, onPan, onPosition, onFit }: Props) {
  const span = view.max - view.min;
  return (
    <div className="flex flex-wrap items-center gap-3 text-xs">
      <fieldset className="flex items-center gap-1">
        <legend className="sr-only">Sweep speed</legend>
        <span className="text-muted">Sweep</span>
        {speeds.map((s) => (
          <label
            key={s}
            className={`cursor-pointer rounded border px-2 py-0.5 ${s === speed ? 'border-ink-700 bg-ink-700 text-white' : 'border-line bg-white hover:bg-ink-50'}`}
          >
            <input type="radio" name="sweep" className="sr-only" checked={s === speed} onChange={() => onSpeed(s)} />
            {s} mm/s
          </label>
        ))}
      </fieldset>
      <div className="flex items-center gap-1">
        <span className="text-muted">Zoom</span>
        <button type="button" className={btn} onClick={() => onZoom(Math.max(0.25, zoom / 2))} aria-label="Zoom out">
          −
        </button>
        <span className="num w-10 text-center">{zoom >= 1 ? `×${zoom.toFixed(zoom % 1 ? 1 : 0)}` : `×${zoom.toFixed(2)}`}</span>
        <button type="button" className={btn} onClick={() => onZoom(Math.min(16, zoom * 2))} aria-label="Zoom in">
          +
        </button>
        <button type="button" className={btn} onClick={onFit}>
          Whole window
        </button>
      </div>
      <div className="flex items-center gap-1">
        <button type="button" className={btn} onClick={() => onPan(-0.5)} disabled={view.min <= 0} aria-label="Pan back">
          ◀
        </button>
        <input
          type="range"
          aria-label="Position in window"
          min={0}
          max={Math.max(0, duration - span)}
          step={0.1}
          value={view.min}
          disabled={span >= duration}
          onChange={(e) => onPosition(Number(e.target.value))}
          className="w-40 accent-ink-700"
        />
        <button type="button" className={btn} onClick={() => onPan(0.5)} disabled={view.max >= duration} aria-label="Pan forward">
          ▶
        </button>
        <span className="num text-muted">
          {view.min.toFixed(1)}–{Math.min(view.max, duration).toFixed(1)} s of {duration.toFixed(1)} s
        </span>
      </div>
    </div>
  );
}
