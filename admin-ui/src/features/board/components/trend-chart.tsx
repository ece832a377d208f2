import { useEffect, useMemo, useRef } from 'react';
import uPlot from 'uplot';
import type { BedTrend, TrendPoint } from '@ebbgate/shared';
import { useElementWidth } from '@/hooks/use-element-width';
import { VERDICT_COLOR } from '@/components/analysis/verdict-mark';
import { placeEventLabels } from './event-labels';

export const TREND_SERIES = [
  { key: 'ppv', label: 'PPV', unit: '%', scale: 'pct', color: '#17313c', dash: [] as number[] },
  { key: 'spv', label: 'SPV', unit: 'mmHg', scale: 'pct', color: '#4a7f91', dash: [6, 3] },
  { key: 'deltaPop', label: 'ΔPOP', unit: '%', scale: 'pct', color: '#7a6a3a', dash: [2, 3] },
  { key: 'heartRate', label: 'HR', unit: '/min', scale: 'rate', color: '#8b5a6b', dash: [] as number[] },
  { key: 'respiratoryRate', label: 'RR', unit: '/min', scale: 'rate', color: '#6f7f45', dash: [4, 2, 1, 2] },
] as const;
export type SeriesKey = (typeof TREND_SERIES)[number]['key'];

const HEIGHT = 320;
const EVENT_COLOR: Record<string, string> = { 'tidal-volume-challenge': '#5a4a86', 'flush-test': '#24505f', 'bed-transfer': '#17313c' };
/** Rows of event labels at the top of the plot; more events than fit keep their line without a label. */
const EVENT_LABEL_ROWS = 3;
const eventLabel = (e: BedTrend['events'][number]) =>
  e.kind === 'tidal-volume-challenge' ? 'Vt challenge' : e.kind === 'flush-test' ? 'flush' : e.label.length > 28 ? `${e.label.slice(0, 27)}…` : e.label;

function canvasAvailable(): boolean {
  try {
    return !!document.createElement('canvas').getContext('2d');
  } catch {
    return false;
  }
}

/** The verdict's shape on canvas: filled circle, open diamond, cross (same as the console's marks). */
function drawMark(ctx: CanvasRenderingContext2D, x: number, y: number, verdict: TrendPoint['verdict'], r: number) {
  const c = VERDICT_COLOR[verdict];
  ctx.beginPath();
  if (verdict === 'valid') {
    ctx.fillStyle = c;
    ctx.arc(x, y, r, 0, Math.PI * 2);
    ctx.fill();
  } else if (verdict === 'questionable') {
    ctx.fillStyle = '#ffffff';
    ctx.strokeStyle = c;
    ctx.lineWidth = 1.5 * uPlot.pxRatio;
    ctx.moveTo(x, y - r * 1.3);
    ctx.lineTo(x + r * 1.3, y);
    ctx.lineTo(x, y + r * 1.3);
    ctx.lineTo(x - r * 1.3, y);
    ctx.closePath();
    ctx.fill();
    ctx.stroke();
  } else {
    ctx.strokeStyle = c;
    ctx.lineWidth = 1.5 * uPlot.pxRatio;
    ctx.moveTo(x - r, y - r);
    ctx.lineTo(x + r, y + r);
    ctx.moveTo(x + r, y - r);
    ctx.lineTo(x - r, y + r);
    ctx.stroke();
  }
}

/**
 * PPV, SPV, ΔPOP (left axis) and HR, RR (right axis) over the span on uPlot, every point drawn with
 * its verdict's shape, the PPV grey zone as a band, events as labelled vertical lines; clicking a
 * point opens its assessment. The table beside it carries the same values for those who cannot see it.
 */
export function TrendChart({
  trend,
  shown,
  onOpen,
  width: fixedWidth,
}: {
  trend: BedTrend;
  shown: Record<SeriesKey, boolean>;
  onOpen: (assessmentId: string) => void;
  width?: number;
}) {
  const { host, width } = useElementWidth<HTMLDivElement>(fixedWidth, 960);
  const data = useMemo(() => {
    const x = trend.points.map((p) => Date.parse(p.t) / 1000);
    return [x, ...TREND_SERIES.map((s) => trend.points.map((p) => p[s.key]))] as uPlot.AlignedData;
  }, [trend]);
  const onOpenRef = useRef(onOpen);
  useEffect(() => {
    onOpenRef.current = onOpen;
  }, [onOpen]);

  useEffect(() => {
    const el = host.current;
    if (!el || !canvasAvailable()) return;
    const pr = uPlot.pxRatio;
    const band = trend.greyZone;
    const opts: uPlot.Options = {
      width,
      height: HEIGHT,
      scales: {
        x: { time: true, range: [Date.parse(trend.from) / 1000, Date.parse(trend.to) / 1000] },
        pct: { range: (_u, _min, max) => [0, Math.max(25, Math.ceil((max ?? 0) / 5) * 5)] },
        rate: { range: (_u, _min, max) => [0, Math.max(120, Math.ceil((max ?? 0) / 20) * 20)] },
      },
      series: [
        {},
        ...TREND_SERIES.map((s) => ({
          label: s.label,
          scale: s.scale,
          stroke: s.color,
          width: 1.25,
          dash: [...s.dash],
          show: shown[s.key],
          spanGaps: false,
          points: { show: false },
        })),
      ],
      axes: [
        { stroke: '#5b6468', grid: { stroke: '#e6e3da' } },
        { scale: 'pct', stroke: '#17313c', label: '% (SPV mmHg)', labelSize: 16, grid: { stroke: '#eeece6' } },
        { scale: 'rate', side: 1, stroke: '#5b6468', label: '/min', labelSize: 16, grid: { show: false } },
      ],
      legend: { show: false },
      cursor: { points: { show: false }, drag: { x: false, y: false } },
      hooks: {
        drawClear: [
          (u) => {
            if (!band || !shown.ppv) return;
            const ctx = u.ctx;
            const top = u.valToPos(band.upper ?? u.scales.pct!.max!, 'pct', true);
            const bottom = u.valToPos(band.lower ?? 0, 'pct', true);
            ctx.save();
            ctx.fillStyle = 'rgba(201, 151, 63, 0.14)';
            ctx.fillRect(u.bbox.left, top, u.bbox.width, bottom - top);
            ctx.restore();
          },
        ],
        draw: [
          (u) => {
            const ctx = u.ctx;
            ctx.save();
            TREND_SERIES.forEach((s, k) => {
              if (!u.series[k + 1]!.show) return;
              const ys = u.data[k + 1]!;
              for (let i = 0; i < ys.length; i++) {
                const v = ys[i];
                if (v === null || v === undefined) continue;
                drawMark(ctx, u.valToPos(u.data[0]![i]!, 'x', true), u.valToPos(v, s.scale, true), trend.points[i]!.verdict, (s.key === 'ppv' ? 3 : 2.2) * pr);
              }
            });
            ctx.font = `${10 * pr}px sans-serif`;
            const right = u.bbox.left + u.bbox.width;
            const shown = trend.events.map((e) => ({ e, x: u.valToPos(Date.parse(e.t) / 1000, 'x', true) })).filter(({ x }) => x >= u.bbox.left && x <= right);
            const texts = shown.map(({ e }) => eventLabel(e));
            const placed = placeEventLabels(
              shown.map(({ x }, i) => ({ x, width: ctx.measureText(texts[i]!).width })),
              u.bbox.left,
              right,
              3 * pr,
              EVENT_LABEL_ROWS,
            );
            shown.forEach(({ e, x }, i) => {
              ctx.strokeStyle = EVENT_COLOR[e.kind] ?? '#9dbcc6';
              ctx.setLineDash(e.kind === 'tidal-volume-challenge' || e.kind === 'flush-test' ? [] : [3 * pr, 3 * pr]);
              ctx.lineWidth = pr;
              ctx.beginPath();
              ctx.moveTo(x, u.bbox.top);
              ctx.lineTo(x, u.bbox.top + u.bbox.height);
              ctx.stroke();
              const at = placed[i];
              if (!at) return;
              ctx.fillStyle = ctx.strokeStyle;
              ctx.fillText(texts[i]!, at.left, u.bbox.top + (11 + 12 * at.row) * pr);
            });
            ctx.restore();
          },
        ],
      },
    };
    let plot: uPlot | null = null;
    try {
      plot = new uPlot(opts, data, el);
    } catch {
      return;
    }
    const onClick = () => {
      const idx = plot?.cursor.idx;
      if (idx !== null && idx !== undefined && trend.points[idx]) onOpenRef.current(trend.points[idx]!.assessmentId);
    };
    plot.over.addEventListener('click', onClick);
    plot.over.style.cursor = 'pointer';
    plot.over.title = 'Click a point to open its assessment';
    return () => {
      plot?.over.removeEventListener('click', onClick);
      plot?.destroy();
    };
  }, [data, width, trend, shown, host]);

  return (
    <div
      ref={host}
      data-testid="trend-chart"
      role="img"
      aria-label={`Trend chart of ${trend.bed.name}: ${trend.points.length} points; the same values are in the table below`}
      className="min-h-[320px] w-full"
    />
  );
}
