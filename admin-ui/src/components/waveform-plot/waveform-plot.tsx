import { useEffect, useMemo, useRef, useState, type KeyboardEvent } from 'react';
import { createPortal } from 'react-dom';
import uPlot from 'uplot';
import type { AnalysisResult, Waveform } from '@/lib/analysis';
import { displayUnit } from '@/lib/format';
import { useElementWidth } from '@/hooks/use-element-width';
import { beatMarks, buildPlotData, cycleMarks } from './marks';
import { MarksOverlay } from './marks-overlay';
import { clampView, DEFAULT_SWEEP, SWEEP_SPEEDS, visibleSeconds, type SweepSpeed, type View } from './sweep';
import { PlotToolbar } from './plot-toolbar';

const COLORS = { abp: '#a3352b', pleth: '#24505f', resp: '#6f7f45' } as const;
const LABELS = { abp: 'Arterial pressure', pleth: 'Pleth', resp: 'Respiration' } as const;
const HEIGHT = 340;
/** Fallback when the container has no layout (tests, hidden tabs). */
const FALLBACK_WIDTH = 960;

export interface WaveformPlotProps {
  waveform: Waveform;
  analysis: AnalysisResult | null;
  /** Fixed width in px; otherwise the plot follows its container. */
  width?: number;
}

/** False where there is no 2-D canvas (DOM-only test environment); the marks still render then. */
function canvasAvailable(): boolean {
  try {
    return !!document.createElement('canvas').getContext('2d');
  } catch {
    return false;
  }
}

function plotArea(u: uPlot) {
  return { left: u.bbox.left / uPlot.pxRatio, top: u.bbox.top / uPlot.pxRatio, width: u.bbox.width / uPlot.pxRatio, height: u.bbox.height / uPlot.pxRatio };
}

function sameView(a: View, b: View) {
  return Math.abs(a.min - b.min) < 1e-6 && Math.abs(a.max - b.max) < 1e-6;
}

/**
 * The waveform with what the engine saw: beat marks (rejected ones with reasons), respiratory
 * cycle boundaries (usable or not), at a chosen sweep speed, with zoom and pan.
 */
export function WaveformPlot({ waveform, analysis, width: fixedWidth }: WaveformPlotProps) {
  const { host, width } = useElementWidth<HTMLDivElement>(fixedWidth, FALLBACK_WIDTH);
  const plotRef = useRef<uPlot | null>(null);
  const [speed, setSpeed] = useState<SweepSpeed>(DEFAULT_SWEEP);
  const [zoom, setZoom] = useState(1);
  const data = useMemo(() => buildPlotData(waveform), [waveform]);
  const beats = useMemo(() => (analysis ? beatMarks(analysis, waveform) : []), [analysis, waveform]);
  const cycles = useMemo(() => (analysis ? cycleMarks(analysis) : []), [analysis]);
  // Plot area: the host minus the axes uPlot reserves (read back from uPlot when it runs).
  const [area, setArea] = useState<{ left: number; top: number; width: number; height: number }>({ left: 50, top: 8, width: width - 100, height: HEIGHT - 40 });
  const span = visibleSeconds(area.width, speed) / zoom;
  const [view, setView] = useState<View>(() => clampView(0, span, data.durationSeconds));
  const [overEl, setOverEl] = useState<HTMLElement | null>(null);
  const [canvas] = useState(canvasAvailable);

  // A new sweep speed, zoom or width keeps the left edge and changes the span: adjusted while
  // rendering (React's pattern for state that follows a changed input), not in an effect after.
  const [spanOf, setSpanOf] = useState({ span, duration: data.durationSeconds });
  if (spanOf.span !== span || spanOf.duration !== data.durationSeconds) {
    setSpanOf({ span, duration: data.durationSeconds });
    setView((v) => {
      const next = clampView(v.min, span, data.durationSeconds);
      return sameView(v, next) ? v : next;
    });
  }

  useEffect(() => {
    const el = host.current;
    if (!el || data.x.length === 0 || !canvas) return;
    const series: uPlot.Series[] = [{}];
    const scales: uPlot.Scales = { x: { time: false, auto: false } };
    data.traces.forEach((t) => {
      scales[t.key] = { auto: false, range: t.range };
      series.push({ label: LABELS[t.key], scale: t.key, stroke: COLORS[t.key], width: t.key === 'resp' ? 1 : 1.25, points: { show: false }, spanGaps: false });
    });
    const axes: uPlot.Axis[] = [
      {
        stroke: '#5b6468',
        grid: { stroke: '#e6e3da', width: 1 },
        ticks: { stroke: '#dcdad2' },
        values: (_u, splits) => splits.map((s) => `${s.toFixed(s % 1 ? 1 : 0)} s`),
      },
    ];
    const abp = data.traces.find((t) => t.key === 'abp');
    const pleth = data.traces.find((t) => t.key === 'pleth');
    // Ticks only within a trace's own lane, so the shared plot area does not read as one scale.
    const inLane = (t: (typeof data.traces)[number]) => (_u: uPlot, splits: number[]) =>
      splits.map((v) => (v >= t.extent[0] - 1e-9 && v <= t.extent[1] + 1e-9 ? v : null));
    if (abp)
      axes.push({
        scale: 'abp',
        stroke: COLORS.abp,
        grid: { show: false },
        size: 50,
        label: displayUnit(abp.unit),
        labelSize: 16,
        filter: inLane(abp),
        space: 24,
      });
    if (pleth)
      axes.push({
        scale: 'pleth',
        side: 1,
        stroke: COLORS.pleth,
        grid: { show: false },
        size: 50,
        label: pleth.unit === '1' || pleth.unit === 'au' ? 'a.u.' : displayUnit(pleth.unit),
        labelSize: 16,
        filter: inLane(pleth),
        space: 18,
      });
    const opts: uPlot.Options = {
      width,
      height: HEIGHT,
      scales,
      series,
      axes,
      legend: { show: false },
      cursor: { drag: { x: true, y: false, setScale: true }, points: { show: false } },
      hooks: {
        setScale: [
          (u, key) => {
            if (key !== 'x' || u.scales.x!.min == null || u.scales.x!.max == null) return;
            const next = { min: u.scales.x!.min, max: u.scales.x!.max };
            setView((v) => (sameView(v, next) ? v : next));
          },
        ],
        setSize: [(u) => setArea(plotArea(u))],
        // The overlay moves into the plot once uPlot has laid it out (its first draw).
        ready: [
          (u) => {
            setArea(plotArea(u));
            setOverEl(u.over);
          },
        ],
      },
    };
    let plot: uPlot | null = null;
    try {
      plot = new uPlot(opts, [data.x, ...data.ys] as uPlot.AlignedData, el);
    } catch {
      plot = null;
    }
    plotRef.current = plot;
    return () => {
      plot?.destroy();
      plotRef.current = null;
      // The overlay falls back to the host until the next plot is ready (or for good, if none is).
      setOverEl(null);
    };
  }, [data, width, canvas, host]);

  useEffect(() => {
    const u = plotRef.current;
    if (!u) return;
    const cur = { min: u.scales.x!.min ?? 0, max: u.scales.x!.max ?? 0 };
    if (!sameView(cur, view)) u.setScale('x', view);
  }, [view, overEl]);

  const pan = (fraction: number) => setView((v) => clampView(v.min + (v.max - v.min) * fraction, v.max - v.min, data.durationSeconds));
  const onKey = (e: KeyboardEvent) => {
    if (e.key === 'ArrowRight') {
      e.preventDefault();
      pan(0.25);
    }
    if (e.key === 'ArrowLeft') {
      e.preventDefault();
      pan(-0.25);
    }
    if (e.key === '+' || e.key === '=') setZoom((z) => Math.min(16, z * 2));
    if (e.key === '-') setZoom((z) => Math.max(0.25, z / 2));
  };

  if (data.traces.length === 0) {
    return <p className="rounded border border-line bg-white p-4 text-sm text-muted">No arterial, pleth or respiration channel in this window to plot.</p>;
  }

  const overlay = <MarksOverlay width={area.width} height={area.height} view={view} beats={beats} cycles={cycles} traces={data.traces} />;

  return (
    <figure className="flex flex-col gap-1.5" aria-label="Waveform with beat and cycle marks">
      <PlotToolbar
        speed={speed}
        speeds={SWEEP_SPEEDS}
        onSpeed={(s) => {
          setSpeed(s);
          setZoom(1);
        }}
        zoom={zoom}
        onZoom={setZoom}
        view={view}
        duration={data.durationSeconds}
        onPan={pan}
        onPosition={(min) => setView((v) => clampView(min, v.max - v.min, data.durationSeconds))}
        onFit={() => {
          setZoom(visibleSeconds(area.width, speed) / Math.max(1, data.durationSeconds));
          setView({ min: 0, max: data.durationSeconds });
        }}
      />
      <div
        ref={host}
        tabIndex={0}
        onKeyDown={onKey}
        aria-label="Waveform plot. Left and right arrows pan, plus and minus zoom. Drag across to zoom in."
        className="relative rounded border border-line bg-white"
        style={{ height: HEIGHT }}
      >
        {overEl ? (
          createPortal(overlay, overEl)
        ) : (
          <div className="absolute" style={{ left: area.left, top: area.top, width: area.width, height: area.height }}>
            {overlay}
          </div>
        )}
      </div>
      <figcaption className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-muted">
        {data.traces.map((t) => (
          <span key={t.key} className="inline-flex items-center gap-1">
            <svg width="18" height="6" aria-hidden>
              <line x1="0" y1="3" x2="18" y2="3" stroke={COLORS[t.key]} strokeWidth="2" />
            </svg>
            {LABELS[t.key]} ({t.role}, {displayUnit(t.unit) || 'a.u.'}, {t.sampleRate} Hz)
          </span>
        ))}
        <span className="inline-flex items-center gap-1">
          <span aria-hidden className="text-ink-900">
            ▼
          </span>
          accepted beat
        </span>
        <span className="inline-flex items-center gap-1">
          <span aria-hidden className="font-bold text-error">
            ✕
          </span>
          rejected beat (hover or focus for reasons)
        </span>
        <span className="inline-flex items-center gap-1">
          <span aria-hidden className="inline-block h-3 w-4 border border-valid/40 bg-valid-bg" />
          usable cycle
        </span>
        <span className="inline-flex items-center gap-1">
          <span aria-hidden className="inline-block h-3 w-4 border border-error/40 bg-error-bg" />
          unusable cycle
        </span>
        <span className="num">
          {beats.filter((b) => b.accepted).length} accepted · {beats.filter((b) => !b.accepted).length} rejected beats · {cycles.filter((c) => c.usable).length}
          /{cycles.length} usable cycles
        </span>
      </figcaption>
    </figure>
  );
}
