import { randomBytes, timingSafeEqual } from 'node:crypto';

// Opaque bearer tokens for the OAuth 2.0 client-credentials grant (RFC 6749 §4.4), kept in memory.

export interface IssuedToken {
  accessToken: string;
  expiresIn: number;
  scope: string;
}

export class TokenService {
  private readonly tokens = new Map<string, { expiresAt: number; scope: string }>();

  constructor(
    readonly clientId: string,
    private readonly clientSecret: string,
    readonly ttlSeconds: number,
  ) {}

  checkClient(id: string, secret: string): boolean {
    return safeEqual(id, this.clientId) && safeEqual(secret, this.clientSecret);
  }

  /** The shared secret, for verifying HMAC-signed client assertions. */
  secretBytes(): Buffer {
    return Buffer.from(this.clientSecret, 'utf8');
  }

  issue(scope: string, now = Date.now()): IssuedToken {
    this.sweep(now);
    const accessToken = randomBytes(24).toString('base64url');
    this.tokens.set(accessToken, { expiresAt: now + this.ttlSeconds * 1000, scope });
    return { accessToken, expiresIn: this.ttlSeconds, scope };
  }

  isValid(token: string, now = Date.now()): boolean {
    const t = this.tokens.get(token);
    return !!t && t.expiresAt > now;
  }

  /** Forgets every token, as an EHR would after rotating its keys: clients must fetch a new one. */
  revokeAll(): void {
    this.tokens.clear();
  }

  private sweep(now: number): void {
    for (const [k, v] of this.tokens) if (v.expiresAt <= now) this.tokens.delete(k);
  }
}

function safeEqual(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}
