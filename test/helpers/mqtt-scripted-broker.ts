/** A TCP server on a free loopback port that plays a faulty broker: onSocket decides what each connection gets. */
import { createServer, type Server, type Socket } from 'node:net';
import { freePort } from './free-port.js';
import type { Teardown } from './teardown.js';

export interface ScriptedBroker {
  readonly port: number;
  /** performance.now() of each accepted connection. */
  readonly accepts: number[];
}

export async function scriptedBroker(onSocket: (s: Socket) => void, td: Teardown): Promise<ScriptedBroker> {
  const port = await freePort();
  const accepts: number[] = [];
  const sockets = new Set<Socket>();
  const server: Server = createServer((s) => {
    accepts.push(performance.now());
    sockets.add(s);
    s.on('close', () => sockets.delete(s));
    s.on('error', () => undefined);
    onSocket(s);
  });
  await new Promise<void>((r) => server.listen(port, '127.0.0.1', r));
  td.add(
    () =>
      new Promise<void>((r) => {
        for (const s of sockets) s.destroy();
        server.close(() => r());
      }),
  );
  return { port, accepts };
}

/** Differences between successive times. */
export function gaps(times: readonly number[]): number[] {
  return times.slice(1).map((t, k) => t - times[k]!);
}
