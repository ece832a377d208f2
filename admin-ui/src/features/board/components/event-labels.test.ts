import { describe, expect, it } from 'vitest';
import { placeEventLabels } from './event-labels';

// Truth here is plain interval geometry: two labels overlap when their [left, left + width] spans do.
const spans = (labels: { width: number }[], placed: ReturnType<typeof placeEventLabels>) =>
  placed.map((p, i) => (p ? { row: p.row, a: p.left, b: p.left + labels[i]!.width } : null));

describe('trend event labels', () => {
  it('puts a label right of its line, or left of it at the right edge, never past the plot', () => {
    const labels = [
      { x: 100, width: 60 },
      { x: 590, width: 60 },
    ];
    const placed = placeEventLabels(labels, 50, 600, 3, 3);
    expect(placed[0]).toEqual({ left: 103, row: 0 });
    expect(placed[1]).toEqual({ left: 590 - 3 - 60, row: 0 });
    for (const s of spans(labels, placed)) expect(s!.b).toBeLessThanOrEqual(600);
  });

  it('moves clashing labels down a row, so no two in a row overlap, and drops what fits in no row', () => {
    const labels = [
      { x: 500, width: 80 },
      { x: 520, width: 80 },
      { x: 540, width: 80 },
      { x: 560, width: 80 },
      { x: 200, width: 40 },
    ];
    const placed = placeEventLabels(labels, 0, 700, 3, 3);
    expect(placed.map((p) => p?.row ?? null)).toEqual([0, 1, 2, null, 0]);
    const s = spans(labels, placed).filter((x) => x !== null);
    for (const p of s) for (const q of s) if (p !== q && p.row === q.row) expect(p.b <= q.a || q.b <= p.a).toBe(true);
  });
});
