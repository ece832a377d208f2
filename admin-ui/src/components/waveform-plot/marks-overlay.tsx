import { useState } from 'react';
import { humanize } from '@/lib/format';
import { LANES, yFraction, type BeatMark, type CycleMark, type Trace } from './marks';
import type { View } from './sweep';

interface Props {
  width: number;
  height: number;
  view: View;
  beats: BeatMark[];
  cycles: CycleMark[];
  traces: Trace[];
}

interface Tip {
  x: number;
  y: number;
  title: string;
  lines: string[];
}

/**
 * Beat and cycle marks drawn as SVG over the plot area, so each mark is a focusable element with
 * its reasons (the canvas under it cannot be hovered or read by assistive technology).
 */
export function MarksOverlay({ width, height, view, beats, cycles, traces }: Props) {
  const [tip, setTip] = useState<Tip | null>(null);
  const span = view.max - view.min || 1;
  const px = (t: number) => ((t - view.min) / span) * width;
  const visible = (t: number) => t >= view.min && t <= view.max;
  const rangeOf = (source: 'abp' | 'pleth') => traces.find((t) => t.key === source)?.range;

  const beatY = (b: BeatMark) => {
    const range = rangeOf(b.source);
    if (range && b.value !== null) return (1 - yFraction(range, b.value)) * height;
    const lane = LANES[b.source];
    return (1 - lane[1]) * height;
  };

  const show = (x: number, y: number, title: string, lines: string[]) => setTip({ x, y, title, lines });

  return (
    <div className="pointer-events-none absolute inset-0" data-testid="plot-marks">
      <svg width={width} height={height} className="absolute inset-0 overflow-visible" role="group" aria-label="Beat and cycle marks">
        <defs>
          <pattern id="unusable-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
            <rect width="6" height="6" fill="#a3352b" fillOpacity="0.05" />
            <line x1="0" y1="0" x2="0" y2="6" stroke="#a3352b" strokeOpacity="0.22" strokeWidth="2" />
          </pattern>
        </defs>
        {cycles
          .filter((c) => c.end >= view.min && c.start <= view.max)
          .map((c) => {
            const x0 = Math.max(0, px(c.start));
            const x1 = Math.min(width, px(c.end));
            const label = c.usable
              ? `Cycle ${c.n}: usable${c.usedInWindow ? ', averaged into the window value' : ''}`
              : `Cycle ${c.n}: not usable — ${c.reasons.map(humanize).join(', ') || 'no reason given'}`;
            return (
              <g
                key={`c${c.n}`}
                data-mark={c.usable ? 'cycle-usable' : 'cycle-unusable'}
                data-used={c.usedInWindow || undefined}
                className="pointer-events-auto"
                tabIndex={0}
                role="img"
                aria-label={label}
                onMouseEnter={() =>
                  show(x0 + 4, height - 70, `Cycle ${c.n}`, c.usable ? [c.usedInWindow ? 'Usable, averaged' : 'Usable'] : c.reasons.map(humanize))
                }
                onMouseLeave={() => setTip(null)}
                onFocus={() => show(x0 + 4, height - 70, `Cycle ${c.n}`, c.usable ? ['Usable'] : c.reasons.map(humanize))}
                onBlur={() => setTip(null)}
              >
                <title>{label}</title>
                <rect
                  x={x0}
                  y={0}
                  width={Math.max(0, x1 - x0)}
                  height={height}
                  fill={c.usable ? (c.usedInWindow ? '#2f6f4a' : '#4a7f91') : 'url(#unusable-hatch)'}
                  fillOpacity={c.usable ? (c.usedInWindow ? 0.1 : 0.06) : 1}
                />
                <line x1={x0} x2={x0} y1={0} y2={height} stroke="#17313c" strokeOpacity="0.35" strokeDasharray="3 3" />
                <text x={x0 + 3} y={height - 4} fontSize="10" fontWeight="600" fill={c.usable ? '#2f6f4a' : '#a3352b'}>{`C${c.n}${c.usable ? '' : ' ✕'}`}</text>
              </g>
            );
          })}
        {beats
          .filter((b) => visible(b.time))
          .map((b) => {
            const x = px(b.time);
            const y = Math.max(6, beatY(b) - 7);
            const label = b.accepted
              ? `${b.source.toUpperCase()} beat ${b.n}: accepted`
              : `${b.source.toUpperCase()} beat ${b.n}: rejected — ${b.reasons.map(humanize).join(', ')}`;
            return (
              <g
                key={b.id}
                data-mark={b.accepted ? 'beat-accepted' : 'beat-rejected'}
                data-reasons={b.reasons.join(' ') || undefined}
                className="beat-mark pointer-events-auto"
                tabIndex={b.accepted ? -1 : 0}
                role="img"
                aria-label={label}
                onMouseEnter={() => !b.accepted && show(x + 8, y, `${b.source.toUpperCase()} beat ${b.n} rejected`, b.reasons.map(humanize))}
                onMouseLeave={() => setTip(null)}
                onFocus={() => !b.accepted && show(x + 8, y, `${b.source.toUpperCase()} beat ${b.n} rejected`, b.reasons.map(humanize))}
                onBlur={() => setTip(null)}
              >
                <title>{label}</title>
                {b.accepted ? (
                  <path d={`M${x - 3.5},${y - 4} L${x + 3.5},${y - 4} L${x},${y + 2} Z`} fill={b.source === 'abp' ? '#7a2820' : '#17313c'} />
                ) : (
                  <g stroke="#a3352b" strokeWidth="2.2" strokeLinecap="round">
                    <circle cx={x} cy={y - 1} r="7" fill="white" fillOpacity="0.01" stroke="none" />
                    <line x1={x - 4} y1={y - 5} x2={x + 4} y2={y + 3} />
                    <line x1={x + 4} y1={y - 5} x2={x - 4} y2={y + 3} />
                  </g>
                )}
              </g>
            );
          })}
      </svg>
      {tip && (
        <div
          role="tooltip"
          className="absolute z-10 max-w-64 rounded border border-line bg-white px-2 py-1 text-xs shadow"
          style={{ left: Math.min(tip.x, width - 200), top: tip.y }}
        >
          <p className="font-semibold">{tip.title}</p>
          <ul className="list-disc pl-4">
            {tip.lines.map((l) => (
              <li key={l}>{l}</li>
            ))}
          </ul>
        </div>
      )}
    </div>
  );
}
