import { describe, expect, it } from 'vitest';
import { DEMO_MONITOR_PROFILE, DEMO_MONITORS } from './monitor-models';

describe('demo monitors', () => {
  it('use locally administered unicast EUI-64 identifiers, never an organisation prefix', () => {
    // IEEE Std 802-2014 §8.2 / RFC 7042 §2.1: bit 0x02 of the first octet set = locally
    // administered (U/L), bit 0x01 clear = individual (I/G).
    for (const m of DEMO_MONITORS) {
      expect(m.identifier).toMatch(/^[0-9A-F]{16}$/);
      const first = parseInt(m.identifier.slice(0, 2), 16);
      expect(first & 0x02).toBe(0x02);
      expect(first & 0x01).toBe(0);
    }
  });

  it('name an invented model without a maker-style letters-and-number code', () => {
    for (const s of [DEMO_MONITOR_PROFILE.name, DEMO_MONITOR_PROFILE.model]) expect(s).not.toMatch(/\b[A-Z]{1,3}-?\d+\b/);
    expect(DEMO_MONITOR_PROFILE.manufacturer).toContain('(invented)');
  });
});
