/**
 * The simulated clock of a run. It starts at `start` (in the past for a backfill) and runs `speed`
 * times faster than the wall clock until it has caught up, then with it. Batches are cut and
 * stamped on this clock, so their times are simulated times, and none lies ahead of the wall
 * clock: a monitor cannot send what has not happened yet, and the gateway files windows (and
 * judges staleness) by those times. `speed` Infinity (the default) sends the whole backfill at once.
 */
export interface SimulatedClock {
  /** Simulated time now, ms since the epoch. */
  now(): number;
  /** Wall-clock seconds until the simulated clock has caught up (0 once it has). */
  catchUpSeconds(): number;
}

export function simulatedClock(start: number, speed = Number.POSITIVE_INFINITY, wall: () => number = Date.now): SimulatedClock {
  if (!(speed >= 1)) throw new RangeError(`speed must be at least 1 (times real time), got ${speed}`);
  const t0 = wall();
  const behind = Math.max(0, t0 - start);
  const caughtUpAt = speed === Number.POSITIVE_INFINITY ? t0 : speed === 1 ? Number.POSITIVE_INFINITY : t0 + behind / (speed - 1);
  return {
    now: () => {
      const w = wall();
      return w >= caughtUpAt ? w : Math.min(w, start + (w - t0) * speed);
    },
    catchUpSeconds: () => Math.max(0, (caughtUpAt - wall()) / 1000),
  };
}
