import { useEffect, useRef, useState } from 'react';

/**
 * The width a chart should draw at: `fixed` when given, else its host's measured width (a
 * ResizeObserver), else `fallback` where there is no layout (tests, hidden tabs).
 */
export function useElementWidth<E extends HTMLElement>(fixed: number | undefined, fallback: number) {
  const host = useRef<E>(null);
  const [measured, setMeasured] = useState(0);
  useEffect(() => {
    if (fixed || !host.current || typeof ResizeObserver === 'undefined') return;
    const ro = new ResizeObserver((entries) => setMeasured(Math.floor(entries[0]!.contentRect.width)));
    ro.observe(host.current);
    return () => ro.disconnect();
  }, [fixed]);
  return { host, width: fixed ?? (measured > 0 ? measured : fallback) };
}
