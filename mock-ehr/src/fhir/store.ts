import { randomUUID } from 'node:crypto';
import type { FhirResource } from './resource-types.js';

/** Every version of one resource, oldest first; the last is current. */
type History = FhirResource[];

/** Undo log for one transaction Bundle: the history each touched key had before (undefined = absent). */
export type Journal = Map<string, History | undefined>;

/**
 * In-memory resource store. Resources are frozen copies so a caller can never change stored state
 * behind the store's back; a transaction records what it overwrote so it can be rolled back whole.
 */
export class ResourceStore {
  private readonly byType = new Map<string, Map<string, History>>();
  private journal: Journal | undefined;

  newId(): string {
    return randomUUID();
  }

  read(type: string, id: string): FhirResource | undefined {
    const h = this.byType.get(type)?.get(id);
    return h?.[h.length - 1];
  }

  readVersion(type: string, id: string, versionId: string): FhirResource | undefined {
    return this.byType.get(type)?.get(id)?.find((r) => r.meta?.versionId === versionId);
  }

  /** Current versions of every resource of a type, in insertion order. */
  all(type: string): FhirResource[] {
    return [...(this.byType.get(type)?.values() ?? [])].map((h) => h[h.length - 1]!);
  }

  /** Stores a new version (versionId = previous + 1) and returns it. */
  write(resource: FhirResource & { id: string }, now = new Date()): FhirResource {
    const table = this.table(resource.resourceType);
    const previous = table.get(resource.id);
    this.remember(resource.resourceType, resource.id, previous);
    const versionId = String((previous?.length ?? 0) + 1);
    const stored = deepFreeze(
      structuredClone({ ...resource, meta: { ...resource.meta, versionId, lastUpdated: now.toISOString() } }),
    );
    table.set(resource.id, [...(previous ?? []), stored]);
    return stored;
  }

  /** Runs fn as one unit: if it throws, every write it made is undone. */
  atomically<T>(fn: () => T): T {
    if (this.journal) return fn();
    const journal: Journal = new Map();
    this.journal = journal;
    try {
      const result = fn();
      this.journal = undefined;
      return result;
    } catch (err) {
      this.rollback(journal);
      this.journal = undefined;
      throw err;
    }
  }

  clear(): void {
    this.byType.clear();
  }

  private rollback(journal: Journal): void {
    for (const [key, history] of journal) {
      const [type, id] = key.split('/') as [string, string];
      if (history) this.table(type).set(id, history);
      else this.table(type).delete(id);
    }
  }

  private remember(type: string, id: string, previous: History | undefined): void {
    const key = `${type}/${id}`;
    if (this.journal && !this.journal.has(key)) this.journal.set(key, previous);
  }

  private table(type: string): Map<string, History> {
    let t = this.byType.get(type);
    if (!t) this.byType.set(type, (t = new Map()));
    return t;
  }
}

function deepFreeze<T>(value: T): T {
  if (value && typeof value === 'object') {
    for (const v of Object.values(value)) deepFreeze(v);
    Object.freeze(value);
  }
  return value;
}
