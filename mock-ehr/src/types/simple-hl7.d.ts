// Minimal typings for the parts of simple-hl7 3.3.0 the mock uses (the package ships none).
declare module 'simple-hl7' {
  import type { Server as NetServer } from 'node:net';
  interface Hl7Message {
    header: { fields: unknown[] };
    toString(): string;
  }
  export class Parser {
    parse(s: string): Hl7Message;
  }
  interface TcpRequest {
    raw: string;
    msg: Hl7Message;
    type: string;
    event: string;
  }
  interface TcpResponse {
    ack: unknown;
    socket: import('node:net').Socket;
    end(): void;
  }
  interface TcpServer {
    server: NetServer | null;
    start(port: number | { port: number; host: string }, encoding?: string): void;
    stop(): void;
  }
  export const Server: {
    createTcpServer(
      options: { parser?: { parse(s: string): Hl7Message } },
      handler: (err: Error | null, req?: TcpRequest, res?: TcpResponse) => void,
    ): TcpServer;
  };
  const _default: { Parser: typeof Parser; Server: typeof Server };
  export default _default;
}
