import net from 'node:net';
import { randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import type { EdgeCredential, EdgeCredentialScope, NewEdgeCredential } from '@ebbgate/shared';
import type { ChangeBy } from '../app-context';
import { recordAudit } from '../audit/audit.service';
import type { MonitorForIngest } from '../devices/device-cache';
import { MonitorProfileRow, MonitorRow } from '../devices/device.entities';
import { badRequest, conflict, notFound } from '../http/problem';
import { EdgeCredentialRow } from './edge-credential.entity';
import { IngestRefusal } from './refusal';
import { normaliseFingerprint, plainAddress, type Sender } from './sender';

/** `a.b.c.d`, `a.b.c.d/n`, an IPv6 address or `x::/n`, into a BlockList; throws on anything else. */
export function addToBlockList(list: net.BlockList, entry: string): void {
  const [addr, bits] = entry.trim().split('/');
  const family = net.isIPv4(addr ?? '') ? 'ipv4' : net.isIPv6(addr ?? '') ? 'ipv6' : null;
  if (!family || !addr) throw new Error(`"${entry}" is not an IP address or CIDR`);
  if (bits === undefined) return list.addAddress(addr, family);
  const prefix = Number(bits);
  if (!Number.isInteger(prefix) || prefix < 0 || prefix > (family === 'ipv4' ? 32 : 128)) throw new Error(`"${entry}" has no valid prefix length`);
  list.addSubnet(addr, prefix, family);
}

function matches(list: net.BlockList, address: string): boolean {
  return list.check(address, net.isIPv6(address) ? 'ipv6' : 'ipv4');
}

interface Snapshot {
  /** Every source registered anywhere plus the configured ones: who may open a plain connection. */
  anySource: net.BlockList;
  sourcesByScope: Map<string, net.BlockList>;
  fingerprintsByScope: Map<string, Set<string>>;
  subjectsByScope: Map<string, Set<string>>;
  until: number;
}

const key = (scope: EdgeCredentialScope, id: string) => `${scope}:${id}`;

/**
 * The edge's view of registered credentials, read from the database at most every few seconds
 * (connection checks must not add a query per connection), cleared at once by changes here.
 */
export class EdgeDirectory {
  private snap: Snapshot | null = null;
  private loading: Promise<Snapshot> | null = null;
  private readonly configured = new net.BlockList();

  constructor(
    private readonly ds: DataSource,
    configuredSources: string[],
    private readonly ttlMs = 5_000,
  ) {
    for (const s of configuredSources) addToBlockList(this.configured, s);
  }

  forget(): void {
    this.snap = null;
  }

  private async snapshot(): Promise<Snapshot> {
    if (this.snap && this.snap.until > Date.now()) return this.snap;
    this.loading ??= this.load().finally(() => (this.loading = null));
    return this.loading;
  }

  private async load(): Promise<Snapshot> {
    const rows = await this.ds.getRepository(EdgeCredentialRow).find();
    const snap: Snapshot = {
      anySource: new net.BlockList(),
      sourcesByScope: new Map(),
      fingerprintsByScope: new Map(),
      subjectsByScope: new Map(),
      until: Date.now() + this.ttlMs,
    };
    for (const r of rows) {
      const k = key(r.scope, r.scopeId);
      if (r.kind === 'source') {
        let l = snap.sourcesByScope.get(k);
        if (!l) snap.sourcesByScope.set(k, (l = new net.BlockList()));
        try {
          addToBlockList(l, r.value);
          addToBlockList(snap.anySource, r.value);
        } catch {
          // validated on entry; a hand-edited bad row is ignored rather than opening anything
        }
      } else {
        const map = r.kind === 'certificate-fingerprint' ? snap.fingerprintsByScope : snap.subjectsByScope;
        let set = map.get(k);
        if (!set) map.set(k, (set = new Set()));
        set.add(r.kind === 'certificate-fingerprint' ? normaliseFingerprint(r.value) : r.value);
      }
    }
    this.snap = snap;
    return snap;
  }

  /** May this address open a plain MLLP connection at all (before anything is read)? */
  async sourceMayConnect(address: string | null): Promise<boolean> {
    const a = plainAddress(address);
    if (!a) return false;
    if (matches(this.configured, a)) return true;
    return matches((await this.snapshot()).anySource, a);
  }

  /**
   * Throws IngestRefusal('unauthorized') unless the sender speaks for this monitor: a client
   * certificate registered on the monitor or its profile; over plain MLLP, an address allowed
   * for it (its own list, else the configured one) and no certificate registered for it (a
   * monitor that has one sends over TLS only). API keys are checked where they are read.
   */
  async checkCovers(sender: Sender | undefined, monitor: MonitorForIngest | null, monitorIdentifier: string): Promise<void> {
    if (!sender || sender.kind === 'api-key') return;
    const snap = await this.snapshot();
    const scopes = monitor ? [key('monitor', monitor.id), ...(monitor.profile ? [key('profile', monitor.profile.id)] : [])] : [];
    if (sender.kind === 'certificate') {
      const ok = scopes.some(
        (k) =>
          snap.fingerprintsByScope.get(k)?.has(sender.fingerprint) ||
          snap.subjectsByScope.get(k)?.has(sender.subject) ||
          snap.subjectsByScope.get(k)?.has(sender.commonName),
      );
      if (!ok) {
        throw new IngestRefusal(
          'unauthorized',
          `The client certificate (${sender.commonName || sender.subject}, SHA-256 ${sender.fingerprint.slice(0, 16)}…) is not registered for monitor ${monitorIdentifier}.`,
          [{ path: 'OBX-18', message: 'not covered by the client certificate' }],
        );
      }
      return;
    }
    if (sender.kind === 'source') {
      if (scopes.some((k) => snap.fingerprintsByScope.has(k) || snap.subjectsByScope.has(k))) {
        throw new IngestRefusal('unauthorized', `Monitor ${monitorIdentifier} has a client certificate registered; it sends over MLLP/TLS only.`, [
          { path: 'OBX-18', message: 'plain MLLP not accepted for this monitor' },
        ]);
      }
      const own = scopes.map((k) => snap.sourcesByScope.get(k)).filter((l): l is net.BlockList => Boolean(l));
      const allowed = own.length ? own.some((l) => matches(l, sender.address)) : matches(this.configured, sender.address);
      if (!allowed)
        throw new IngestRefusal('unauthorized', `Source ${sender.address} is not allowed to send for monitor ${monitorIdentifier}.`, [
          { path: 'OBX-18', message: 'source address not allowed' },
        ]);
      return;
    }
    throw new IngestRefusal('unauthorized', 'The sender is not authenticated.', []);
  }
}

function toCredential(r: EdgeCredentialRow): EdgeCredential {
  return {
    id: r.id,
    scope: r.scope,
    scopeId: r.scopeId,
    kind: r.kind,
    value: r.value,
    note: r.note,
    createdAt: r.createdAt.toISOString(),
    createdBy: r.createdBy,
  };
}

async function assertScope(ds: DataSource, scope: EdgeCredentialScope, id: string): Promise<void> {
  const exists = scope === 'monitor' ? await ds.getRepository(MonitorRow).existsBy({ id }) : await ds.getRepository(MonitorProfileRow).existsBy({ id });
  if (!exists) throw notFound(`${scope === 'monitor' ? 'Monitor' : 'Profile'} ${id}`);
}

export async function listEdgeCredentials(ds: DataSource, scope: EdgeCredentialScope, scopeId: string): Promise<EdgeCredential[]> {
  await assertScope(ds, scope, scopeId);
  return (await ds.getRepository(EdgeCredentialRow).find({ where: { scope, scopeId }, order: { createdAt: 'ASC' } })).map(toCredential);
}

/** The value as stored: fingerprints normalised (64 hex digits), sources checked as addresses/CIDRs. */
function normaliseValue(input: NewEdgeCredential): string {
  if (input.kind === 'certificate-fingerprint') {
    const fp = normaliseFingerprint(input.value);
    if (fp.length !== 64)
      throw badRequest('A certificate fingerprint is the SHA-256 of the certificate: 64 hex digits (colons allowed).', [
        { path: 'value', message: 'not a SHA-256 fingerprint' },
      ]);
    return fp;
  }
  if (input.kind === 'source') {
    try {
      addToBlockList(new net.BlockList(), input.value);
    } catch (err) {
      throw badRequest((err as Error).message, [{ path: 'value', message: 'not an IP address or CIDR' }]);
    }
  }
  return input.value.trim();
}

export async function addEdgeCredential(
  ds: DataSource,
  dir: EdgeDirectory,
  scope: EdgeCredentialScope,
  scopeId: string,
  input: NewEdgeCredential,
  by: ChangeBy,
): Promise<EdgeCredential> {
  await assertScope(ds, scope, scopeId);
  const value = normaliseValue(input);
  const who = by.principal?.kind === 'user' ? by.principal.username : null;
  const out = await ds.transaction(async (m) => {
    if (await m.existsBy(EdgeCredentialRow, { scope, scopeId, kind: input.kind, value }))
      throw conflict(`This ${input.kind} is already registered on the ${scope}.`);
    const row = m.create(EdgeCredentialRow, {
      id: randomUUID(),
      scope,
      scopeId,
      kind: input.kind,
      value,
      note: input.note ?? null,
      createdAt: new Date(),
      createdBy: who,
    });
    await m.insert(EdgeCredentialRow, row);
    await recordAudit(m, {
      principal: by.principal,
      action: 'edge-credential.add',
      entityType: scope,
      entityId: scopeId,
      after: { kind: input.kind, value, note: input.note ?? null },
      requestId: by.requestId,
    });
    return toCredential(row);
  });
  dir.forget();
  return out;
}

export async function removeEdgeCredential(
  ds: DataSource,
  dir: EdgeDirectory,
  scope: EdgeCredentialScope,
  scopeId: string,
  credentialId: string,
  by: ChangeBy,
): Promise<void> {
  await ds.transaction(async (m) => {
    const row = await m.findOneBy(EdgeCredentialRow, { id: credentialId, scope, scopeId });
    if (!row) throw notFound(`Credential ${credentialId} on ${scope} ${scopeId}`);
    await m.delete(EdgeCredentialRow, { id: credentialId });
    await recordAudit(m, {
      principal: by.principal,
      action: 'edge-credential.remove',
      entityType: scope,
      entityId: scopeId,
      before: { kind: row.kind, value: row.value, note: row.note },
      requestId: by.requestId,
    });
  });
  dir.forget();
}
