/** Where an event's label goes on the trend chart: beside its line, in the first row where it fits. */
export interface PlacedLabel {
  /** Left edge of the text, in canvas pixels. */
  left: number;
  /** 0 = top row; labels that clash with an earlier one move down a row. */
  row: number;
}

/**
 * Lays out event labels (line position `x`, text `width`) inside [plotLeft, plotRight]: each sits
 * right of its line, or left of it where it would run past the right edge, in the first row where
 * it overlaps no earlier label. Labels that fit in none of `maxRows` rows get null (the line is
 * still drawn, and the table under the chart lists every event).
 */
export function placeEventLabels(
  labels: { x: number; width: number }[],
  plotLeft: number,
  plotRight: number,
  gap: number,
  maxRows: number,
): (PlacedLabel | null)[] {
  const rows: [number, number][][] = Array.from({ length: maxRows }, () => []);
  return labels.map(({ x, width }) => {
    let left = x + gap;
    if (left + width > plotRight) left = x - gap - width;
    left = Math.max(plotLeft, left);
    const right = left + width;
    const row = rows.findIndex((taken) => taken.every(([a, b]) => right + gap <= a || left >= b + gap));
    if (row < 0) return null;
    rows[row]!.push([left, right]);
    return { left, row };
  });
}
