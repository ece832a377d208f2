import { describe, expect, it } from 'vitest';
import { findMatches } from './search.js';
import { ResourceStore } from './store.js';

// The store's own contract (no outside reference: this is the mock's design): versions count up,
// atomically() undoes every write on failure, and the identifier index follows writes and undos.

const obs = (id: string, value: string) => ({
  resourceType: 'Observation',
  id,
  identifier: [{ system: 'urn:t', value }],
  status: 'final',
  code: { text: 'x' },
});

describe('ResourceStore', () => {
  it('counts versions up and keeps the old ones readable', () => {
    const s = new ResourceStore();
    s.write(obs('a', 'one'));
    const v2 = s.write(obs('a', 'two'));
    expect(v2.meta?.versionId).toBe('2');
    expect((s.readVersion('Observation', 'a', '1')?.identifier as { value: string }[])[0]!.value).toBe('one');
    expect(Object.isFrozen(v2)).toBe(true);
  });

  it('rolls back every write of a failed unit, index included', () => {
    const s = new ResourceStore();
    s.write(obs('a', 'one'));
    expect(() =>
      s.atomically(() => {
        s.write(obs('a', 'changed'));
        s.write(obs('b', 'new'));
        throw new Error('boom');
      }),
    ).toThrow('boom');
    expect(s.read('Observation', 'a')?.meta?.versionId).toBe('1');
    expect(s.read('Observation', 'b')).toBeUndefined();
    expect(findMatches(s, 'Observation', 'identifier=urn:t|one').map((r) => r.id)).toEqual(['a']);
    expect(findMatches(s, 'Observation', 'identifier=urn:t|changed')).toEqual([]);
    expect(findMatches(s, 'Observation', 'identifier=urn:t|new')).toEqual([]);
  });

  it('moves a resource in the identifier index when its identifier changes', () => {
    const s = new ResourceStore();
    s.write(obs('a', 'one'));
    s.write(obs('a', 'two'));
    expect(findMatches(s, 'Observation', 'identifier=urn:t|one')).toEqual([]);
    expect(findMatches(s, 'Observation', 'identifier=urn:t|two')).toHaveLength(1);
  });
});
