import { randomBytes, scrypt as scryptCb, timingSafeEqual, type ScryptOptions } from 'node:crypto';
import { hash as argon2Hash, verify as argon2Verify, type Algorithm } from '@node-rs/argon2';

/**
 * Password storage per the OWASP Password Storage Cheat Sheet (2023 revision): argon2id with
 * m = 19 MiB, t = 2, p = 1 (its first listed configuration). @node-rs/argon2 hashes on libuv's
 * thread pool, so a sign-in never blocks the event loop. Hashes written before this change
 * (`scrypt$N$r$p$salt$hash`, N = 2^14, below the sheet's 2^17) still verify and are rewritten
 * on the next successful sign-in (`needsRehash`).
 */
// `Algorithm` is an ambient const enum (not importable under isolatedModules): 2 is Argon2id.
export const ARGON2_PARAMS = { algorithm: 2 as Algorithm, memoryCost: 19_456, timeCost: 2, parallelism: 1, outputLen: 32 } as const;

const scrypt = (password: string, salt: Buffer, keylen: number, opts: ScryptOptions) =>
  new Promise<Buffer>((resolve, reject) => scryptCb(password, salt, keylen, opts, (err, key) => (err ? reject(err) : resolve(key))));

export async function hashPassword(password: string): Promise<string> {
  return argon2Hash(password, ARGON2_PARAMS);
}

async function verifyLegacyScrypt(password: string, stored: string): Promise<boolean> {
  const [, n, r, p, salt, hash] = stored.split('$');
  const N = Number(n);
  const R = Number(r);
  const P = Number(p);
  if (!salt || !hash || !Number.isInteger(N) || !Number.isInteger(R) || !Number.isInteger(P) || N > 2 ** 20 || R > 32 || P > 16) return false;
  const expected = Buffer.from(hash, 'base64url');
  // maxmem above 128·N·r so Node does not refuse the larger legal parameters.
  const key = await scrypt(password, Buffer.from(salt, 'base64url'), expected.length, { N, r: R, p: P, maxmem: 256 * N * R + 1024 * 1024 });
  return timingSafeEqual(key, expected);
}

export async function verifyPassword(password: string, stored: string): Promise<boolean> {
  try {
    if (stored.startsWith('$argon2')) return await argon2Verify(stored, password);
    if (stored.startsWith('scrypt$')) return await verifyLegacyScrypt(password, stored);
    return false;
  } catch {
    return false;
  }
}

/** True when the stored hash is not argon2id with today's parameters (rewrite it after a good sign-in). */
export function needsRehash(stored: string): boolean {
  const m = /^\$argon2id\$v=19\$m=(\d+),t=(\d+),p=(\d+)\$/.exec(stored);
  if (!m) return true;
  return Number(m[1]) < ARGON2_PARAMS.memoryCost || Number(m[2]) < ARGON2_PARAMS.timeCost || Number(m[3]) !== ARGON2_PARAMS.parallelism;
}

/**
 * A hash to verify against when the username is unknown, made with today's parameters, so an
 * unknown user costs the same time as a wrong password (made once, lazily: a random password).
 */
let dummy: Promise<string> | undefined;
export function dummyHash(): Promise<string> {
  return (dummy ??= hashPassword(randomBytes(24).toString('base64url')));
}
