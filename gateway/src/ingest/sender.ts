/**
 * Who sent an inbound message, as the edge established it before reading the content: a
 * monitor API key (HTTP), a verified client certificate (MLLP over TLS), an allowed source
 * address (plain MLLP), or nobody (a stranger: no key, an unknown key, a refused certificate).
 */
export type Sender =
  | { kind: 'api-key'; monitorId: string; monitorIdentifier: string; address: string | null }
  | { kind: 'certificate'; fingerprint: string; subject: string; commonName: string; address: string | null }
  | { kind: 'source'; address: string }
  | { kind: 'none'; address: string | null };

/** The one line stored with each inbound message (`inbound_message.sender`); null for a stranger. */
export function senderLabel(s: Sender | undefined): string | null {
  if (!s) return null;
  switch (s.kind) {
    case 'api-key':
      return `api-key:${s.monitorIdentifier}`;
    case 'certificate':
      return `certificate:${s.fingerprint} ${s.subject}`.slice(0, 255);
    case 'source':
      return `source:${s.address}`;
    default:
      return null;
  }
}

/** SHA-256 fingerprint in one spelling: upper-case hex without separators. */
export function normaliseFingerprint(value: string): string {
  return value.replace(/[^0-9a-fA-F]/g, '').toUpperCase();
}

/** IPv4-mapped IPv6 addresses (`::ffff:127.0.0.1`) as the plain IPv4 address. */
export function plainAddress(address: string | undefined | null): string | null {
  if (!address) return null;
  return address.startsWith('::ffff:') && address.includes('.') ? address.slice(7) : address;
}
