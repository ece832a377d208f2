/**
 * Demo certificates for MLLP over TLS: a private demo CA, the gateway's server certificate
 * (SAN 127.0.0.1, ::1, localhost) and one client certificate per simulated adapter, made with
 * Debian's openssl (EC P-256, SHA-256). Created once under `.data/certs` (never committed) and
 * reused; a missing file is made again. For demos and tests only: a hospital uses its own PKI.
 */
import { execFileSync } from 'node:child_process';
import { X509Certificate } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';

export interface ClientCertificate {
  name: string;
  certFile: string;
  keyFile: string;
  /** SHA-256 of the DER certificate, upper-case hex without colons (what the gateway registers). */
  fingerprint: string;
  subject: string;
}

export interface DemoCertificates {
  dir: string;
  caFile: string;
  certFile: string;
  keyFile: string;
  clients: ClientCertificate[];
}

const openssl = (args: string[], cwd: string) => execFileSync('openssl', args, { cwd, stdio: ['ignore', 'ignore', 'pipe'] });

export function fingerprintOf(certFile: string): string {
  return new X509Certificate(readFileSync(certFile)).fingerprint256.replace(/:/g, '').toUpperCase();
}

function issue(dir: string, name: string, subject: string, ext: string, days: number): void {
  const key = `${name}.key`;
  if (existsSync(path.join(dir, `${name}.crt`)) && existsSync(path.join(dir, key))) return;
  openssl(['ecparam', '-name', 'prime256v1', '-genkey', '-noout', '-out', key], dir);
  openssl(['req', '-new', '-key', key, '-subj', subject, '-out', `${name}.csr`], dir);
  writeFileSync(path.join(dir, `${name}.ext`), ext);
  openssl(
    [
      'x509',
      '-req',
      '-in',
      `${name}.csr`,
      '-CA',
      'ca.crt',
      '-CAkey',
      'ca.key',
      '-CAcreateserial',
      '-days',
      String(days),
      '-sha256',
      '-extfile',
      `${name}.ext`,
      '-out',
      `${name}.crt`,
    ],
    dir,
  );
}

/** Makes (or reuses) the demo CA, the gateway certificate and a client certificate for each name. */
export function ensureDemoCertificates(dir: string, clientNames: string[], days = 825): DemoCertificates {
  mkdirSync(dir, { recursive: true, mode: 0o700 });
  if (!existsSync(path.join(dir, 'ca.crt')) || !existsSync(path.join(dir, 'ca.key'))) {
    openssl(['ecparam', '-name', 'prime256v1', '-genkey', '-noout', '-out', 'ca.key'], dir);
    openssl(
      [
        'req',
        '-x509',
        '-new',
        '-key',
        'ca.key',
        '-sha256',
        '-days',
        String(days),
        '-subj',
        '/O=Harrowmere General (demo)/CN=Ebbgate demo CA',
        '-addext',
        'basicConstraints=critical,CA:TRUE',
        '-addext',
        'keyUsage=critical,keyCertSign,cRLSign',
        '-out',
        'ca.crt',
      ],
      dir,
    );
  }
  issue(
    dir,
    'gateway',
    '/O=Harrowmere General (demo)/CN=ebbgate-gateway',
    'basicConstraints=CA:FALSE\nkeyUsage=critical,digitalSignature\nextendedKeyUsage=serverAuth\nsubjectAltName=IP:127.0.0.1,IP:::1,DNS:localhost\n',
    days,
  );
  const clients = clientNames.map((name) => {
    if (!/^[a-z0-9][a-z0-9-]{0,62}$/.test(name)) throw new Error(`client certificate name "${name}": lower-case letters, digits and dashes only`);
    issue(
      dir,
      `client-${name}`,
      `/O=Harrowmere General (demo)/CN=${name}`,
      'basicConstraints=CA:FALSE\nkeyUsage=critical,digitalSignature\nextendedKeyUsage=clientAuth\n',
      days,
    );
    const certFile = path.join(dir, `client-${name}.crt`);
    return {
      name,
      certFile,
      keyFile: path.join(dir, `client-${name}.key`),
      fingerprint: fingerprintOf(certFile),
      subject: new X509Certificate(readFileSync(certFile)).subject.replace(/\n/g, ','),
    };
  });
  return { dir, caFile: path.join(dir, 'ca.crt'), certFile: path.join(dir, 'gateway.crt'), keyFile: path.join(dir, 'gateway.key'), clients };
}

/** The gateway's `mllp.tls` file settings for a set of demo certificates. */
export const tlsFiles = (c: DemoCertificates) => ({ certFile: c.certFile, keyFile: c.keyFile, caFile: c.caFile });
