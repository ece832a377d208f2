import type { BedTile } from '@ebbgate/shared';
import { VERDICT_COLOR } from '@/components/analysis/verdict-mark';

const W = 150;
const H = 34;

/** The last hour's PPV, 5-minute means, each bucket drawn with the shape of its worst verdict. */
export function MiniTrend({ points, label }: { points: BedTile['trend']; label: string }) {
  const values = points.map((p) => p.ppv).filter((v): v is number => v !== null);
  if (values.length === 0) return <p className="h-[34px] text-xs text-muted">No valid or questionable PPV in the last hour.</p>;
  const max = Math.max(20, ...values);
  const x = (i: number) => 4 + (i / Math.max(1, points.length - 1)) * (W - 8);
  const y = (v: number) => H - 4 - (v / max) * (H - 8);
  const line = points
    .map((p, i) => (p.ppv === null ? null : `${x(i).toFixed(1)},${y(p.ppv).toFixed(1)}`))
    .filter(Boolean)
    .join(' ');
  return (
    <svg viewBox={`0 0 ${W} ${H}`} width={W} height={H} role="img" aria-label={label} className="block">
      <line x1="0" x2={W} y1={H - 2} y2={H - 2} stroke="#dcdad2" />
      <polyline points={line} fill="none" stroke="#9dbcc6" strokeWidth="1" />
      {points.map((p, i) => {
        if (p.ppv === null || !p.verdict) return null;
        const cx = x(i);
        const cy = y(p.ppv);
        const c = VERDICT_COLOR[p.verdict];
        if (p.verdict === 'valid') return <circle key={i} cx={cx} cy={cy} r="2.4" fill={c} />;
        if (p.verdict === 'questionable')
          return <path key={i} d={`M${cx} ${cy - 3} L${cx + 3} ${cy} L${cx} ${cy + 3} L${cx - 3} ${cy} Z`} fill="white" stroke={c} strokeWidth="1.2" />;
        return (
          <path
            key={i}
            d={`M${cx - 2.5} ${cy - 2.5} L${cx + 2.5} ${cy + 2.5} M${cx + 2.5} ${cy - 2.5} L${cx - 2.5} ${cy + 2.5}`}
            stroke={c}
            strokeWidth="1.2"
          />
        );
      })}
    </svg>
  );
}
