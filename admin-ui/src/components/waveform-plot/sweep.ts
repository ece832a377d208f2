/** Sweep speeds of paper and bedside displays (common practice); 6.25 mm/s shows respiratory swing best. */
export const SWEEP_SPEEDS = [6.25, 12.5, 25] as const;
export type SweepSpeed = (typeof SWEEP_SPEEDS)[number];
export const DEFAULT_SWEEP: SweepSpeed = 6.25;

/** CSS pixels per millimetre (CSS defines 96 px per inch). */
export const PX_PER_MM = 96 / 25.4;

/** Seconds that fit across `widthPx` at a sweep speed, before any zoom. */
export function visibleSeconds(widthPx: number, speedMmPerS: number): number {
  return widthPx / (speedMmPerS * PX_PER_MM);
}

export interface View {
  min: number;
  max: number;
}

/** Keeps a view inside [0, duration] while keeping its span (unless the span is longer). */
export function clampView(min: number, span: number, duration: number): View {
  if (span >= duration) return { min: 0, max: Math.max(span, duration) };
  const lo = Math.min(Math.max(0, min), duration - span);
  return { min: lo, max: lo + span };
}
