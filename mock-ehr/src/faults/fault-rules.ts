import { z } from 'zod';

// Fault rules set through PUT /_admin/faults. Fractions are applied deterministically (evenly
// spread: rate 0.25 fails requests 4, 8, 12 … of the rule) so tests and demos can be repeated.

export const faultRuleSchema = z.object({
  /** 'all', 'token' (the token endpoint), 'metadata', or a resource type (also matches Bundles that hold it). */
  scope: z.string().min(1).default('all'),
  errorRate: z.number().min(0).max(1).default(0),
  statusCodes: z.array(z.number().int().min(400).max(599)).min(1).default([503]),
  /** Sent as Retry-After on 429 and 503 answers. */
  retryAfterSeconds: z.number().int().min(0).optional(),
  latencyMs: z.number().int().min(0).max(120_000).default(0),
  /** Fraction of requests that are never answered (the connection stays open until the client gives up). */
  timeoutRate: z.number().min(0).max(1).default(0),
  /** Every request in scope has its connection destroyed without an answer. */
  down: z.boolean().default(false),
  /** The rule removes itself after injecting this many faults (errors, hangs or drops). */
  remaining: z.number().int().min(1).optional(),
});
export type FaultRule = z.infer<typeof faultRuleSchema>;

export const faultSettingsSchema = z.object({ rules: z.array(faultRuleSchema).max(20) });
export type FaultSettings = z.infer<typeof faultSettingsSchema>;

export type FaultDecision =
  | { kind: 'none'; latencyMs: number }
  | { kind: 'error'; latencyMs: number; status: number; retryAfterSeconds?: number }
  | { kind: 'hang'; latencyMs: number }
  | { kind: 'drop'; latencyMs: number };

interface LiveRule {
  rule: FaultRule;
  seen: number;
  injected: number;
}

/** Evenly spread trigger for a fraction: true on the requests where floor(n·rate) steps up. */
function every(rate: number, n: number): boolean {
  return Math.floor((n + 1) * rate + 1e-9) > Math.floor(n * rate + 1e-9);
}

export class FaultInjector {
  private live: LiveRule[] = [];
  private injectedTotal = 0;

  set(settings: FaultSettings): void {
    this.live = settings.rules.map((rule) => ({ rule, seen: 0, injected: 0 }));
  }

  clear(): void {
    this.live = [];
    this.injectedTotal = 0;
  }

  view(): { rules: (FaultRule & { seen: number; injected: number })[]; injectedTotal: number } {
    return { rules: this.live.map((l) => ({ ...l.rule, seen: l.seen, injected: l.injected })), injectedTotal: this.injectedTotal };
  }

  /** Decides what happens to one request in the given scopes (e.g. ['Observation'] or ['Bundle', 'Observation']). */
  decide(scopes: string[]): FaultDecision {
    let latencyMs = 0;
    for (const l of this.live) {
      const r = l.rule;
      if (r.scope !== 'all' && !scopes.includes(r.scope)) continue;
      const n = l.seen++;
      latencyMs += r.latencyMs;
      const fault: FaultDecision | undefined = r.down
        ? { kind: 'drop', latencyMs }
        : every(r.timeoutRate, n)
          ? { kind: 'hang', latencyMs }
          : every(r.errorRate, n)
            ? { kind: 'error', latencyMs, status: r.statusCodes[l.injected % r.statusCodes.length]!, retryAfterSeconds: r.retryAfterSeconds }
            : undefined;
      if (fault) {
        l.injected++;
        this.injectedTotal++;
        if (r.remaining !== undefined && l.injected >= r.remaining) this.live = this.live.filter((x) => x !== l);
        return { ...fault, latencyMs };
      }
    }
    return { kind: 'none', latencyMs };
  }
}
