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
  /** type → "system|value" → ids: conditional creates by identifier stay O(1) as the store grows. */
  private readonly identifierIndex = new Map<string, Map<string, Set<string>>>();
  private journal: Journal | undefined;

  newId(): string {
    return randomUUID();
  }

  read(type: string, id: string): FhirResource | undefined {
    const h = this.byType.get(type)?.get(id);
    return h?.[h.length - 1];
  }

  readVersion(type: string, id: string, versionId: string): FhirResource | undefined {
    return this.byType
      .get(type)
      ?.get(id)
      ?.find((r) => r.meta?.versionId === versionId);
  }

  /** Current versions of every resource of a type, in insertion order. */
  all(type: string): FhirResource[] {
    return [...(this.byType.get(type)?.values() ?? [])].map((h) => h[h.length - 1]!);
  }

  /** Current resources of a type holding the identifier system|value. */
  byIdentifier(type: string, system: string, value: string): FhirResource[] {
    const ids = this.identifierIndex.get(type)?.get(`${system}|${value}`);
    return ids ? [...ids].map((id) => this.read(type, id)!).filter(Boolean) : [];
  }

  /** Stores a new version (versionId = previous + 1) and returns it. */
  write(resource: FhirResource & { id: string }, now = new Date()): FhirResource {
    const table = this.table(resource.resourceType);
    const previous = table.get(resource.id);
    this.remember(resource.resourceType, resource.id, previous);
    const versionId = String((previous?.length ?? 0) + 1);
    const stored = deepFreeze(structuredClone({ ...resource, meta: { ...resource.meta, versionId, lastUpdated: now.toISOString() } }));
    if (previous) this.unindex(previous[previous.length - 1]!);
    table.set(resource.id, [...(previous ?? []), stored]);
    this.index(stored);
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
    this.identifierIndex.clear();
  }

  private rollback(journal: Journal): void {
    for (const [key, history] of journal) {
      const [type, id] = key.split('/') as [string, string];
      const current = this.read(type, id);
      if (current) this.unindex(current);
      if (history) {
        this.table(type).set(id, history);
        this.index(history[history.length - 1]!);
      } else this.table(type).delete(id);
    }
  }

  private identifierKeys(r: FhirResource): string[] {
    const ids = Array.isArray(r.identifier) ? (r.identifier as { system?: unknown; value?: unknown }[]) : [];
    return ids.filter((i) => typeof i.system === 'string' && typeof i.value === 'string').map((i) => `${String(i.system)}|${String(i.value)}`);
  }

  private index(r: FhirResource): void {
    let byKey = this.identifierIndex.get(r.resourceType);
    if (!byKey) this.identifierIndex.set(r.resourceType, (byKey = new Map()));
    for (const key of this.identifierKeys(r)) {
      let set = byKey.get(key);
      if (!set) byKey.set(key, (set = new Set()));
      set.add(r.id!);
    }
  }

  private unindex(r: FhirResource): void {
    const byKey = this.identifierIndex.get(r.resourceType);
    for (const key of this.identifierKeys(r)) byKey?.get(key)?.delete(r.id!);
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
