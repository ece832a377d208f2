/**
 * Hostile HTTP senders for the header/body timeout and permission-before-body tests, shared by the
 * in-process suite (gateway/test/http) and the one against the gateway's own process (tests/src/security).
 */
import http from 'node:http';
import net from 'node:net';

/** Opens a socket, writes `head`, then one byte every `everyMs`; resolves with what came back and when the server closed. */
export function drip(port: number, head: string, everyMs: number, giveUpMs: number): Promise<{ closedAfterMs: number | null; answer: string }> {
  return new Promise((resolve) => {
    const t0 = Date.now();
    const sock = net.connect(port, '127.0.0.1');
    let answer = '';
    const timer = setInterval(() => sock.writable && sock.write('x'), everyMs);
    const giveUp = setTimeout(() => {
      clearInterval(timer);
      sock.destroy();
      resolve({ closedAfterMs: null, answer });
    }, giveUpMs);
    sock.on('data', (d) => (answer += d.toString()));
    sock.on('error', () => undefined);
    sock.on('close', () => {
      clearInterval(timer);
      clearTimeout(giveUp);
      resolve({ closedAfterMs: Date.now() - t0, answer });
    });
    sock.write(head);
  });
}

/**
 * POSTs headers declaring `declared` bytes and sends only `sent` of them; resolves with the status
 * if the answer comes before `giveUpMs`, else 'no answer'.
 */
export function partialUpload(
  port: number,
  upload: { path: string; headers: Record<string, string>; declared: number; sent: number; giveUpMs: number },
): Promise<number | 'no answer'> {
  return new Promise((resolve) => {
    const req = http.request({
      host: '127.0.0.1',
      port,
      path: upload.path,
      method: 'POST',
      headers: { ...upload.headers, 'content-length': String(upload.declared) },
    });
    const timer = setTimeout(() => {
      req.destroy();
      resolve('no answer');
    }, upload.giveUpMs);
    req.on('response', (res) => {
      clearTimeout(timer);
      res.resume();
      req.destroy();
      resolve(res.statusCode ?? 0);
    });
    req.on('error', () => undefined);
    req.write(Buffer.alloc(upload.sent, 0x41));
  });
}
