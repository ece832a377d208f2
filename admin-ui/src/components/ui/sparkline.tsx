/** A small per-minute chart: one polyline per series, no axes (the number beside it is the reading). */
export function Sparkline({
  series,
  colors,
  label,
  width = 180,
  height = 36,
}: {
  series: number[][];
  colors: string[];
  label: string;
  width?: number;
  height?: number;
}) {
  const n = Math.max(0, ...series.map((s) => s.length));
  const max = Math.max(1, ...series.flat());
  const x = (i: number) => (n <= 1 ? 0 : (i / (n - 1)) * width);
  const y = (v: number) => height - 2 - (v / max) * (height - 4);
  return (
    <svg viewBox={`0 0 ${width} ${height}`} preserveAspectRatio="none" height={height} role="img" aria-label={label} className="block w-full">
      <line x1="0" x2={width} y1={height - 1.5} y2={height - 1.5} stroke="#dcdad2" />
      {series.map((s, k) => (
        <polyline
          key={k}
          fill="none"
          stroke={colors[k] ?? '#24505f'}
          strokeWidth="1.5"
          strokeLinejoin="round"
          vectorEffect="non-scaling-stroke"
          points={s.map((v, i) => `${x(i).toFixed(1)},${y(v).toFixed(1)}`).join(' ')}
        />
      ))}
    </svg>
  );
}
