import { useCallback, useState } from 'react';
import { errorMessage } from '@/lib/api-client';

export type ItemState = { id: string; status: 'waiting' | 'running' | 'done' | 'failed'; message?: string };

/**
 * Runs one request per selected item (two at a time) and keeps each item's outcome, so a bulk
 * retry or discard shows exactly which items succeeded and why the others did not.
 */
export function useBulkAction<R, A = void>(run: (id: string, arg: A) => Promise<R>, describe?: (r: R) => string | undefined) {
  const [items, setItems] = useState<ItemState[]>([]);
  const [running, setRunning] = useState(false);

  const start = useCallback(
    async (ids: string[], arg: A) => {
      setRunning(true);
      setItems(ids.map((id) => ({ id, status: 'waiting' })));
      const set = (id: string, patch: Partial<ItemState>) => setItems((xs) => xs.map((x) => (x.id === id ? { ...x, ...patch } : x)));
      const queue = [...ids];
      const worker = async () => {
        for (let id = queue.shift(); id !== undefined; id = queue.shift()) {
          set(id, { status: 'running' });
          try {
            const r = await run(id, arg);
            set(id, { status: 'done', message: describe?.(r) });
          } catch (err) {
            set(id, { status: 'failed', message: errorMessage(err) });
          }
        }
      };
      await Promise.all([worker(), worker()]);
      setRunning(false);
    },
    [run, describe],
  );

  const reset = useCallback(() => setItems([]), []);
  const done = items.filter((i) => i.status === 'done').length;
  const failed = items.filter((i) => i.status === 'failed').length;
  return { items, running, start, reset, done, failed };
}
