/**
 * An in-process MQTT broker (aedes) for the demo and for trials without a
 * broker. It listens on loopback only: it has no TLS and no authentication,
 * so it must never face a network. Production uses mosquitto
 * (config/mosquitto.example.conf).
 */
import { createServer } from 'node:net';
import type { AddressInfo, Server, Socket } from 'node:net';
import { Aedes } from 'aedes';
import { AgentError } from '../core/errors.js';

export interface EmbeddedBrokerOptions {
  /** TCP port; 0 picks a free one (read it back from `port`). */
  readonly port: number;
  /** Loopback address to listen on. Default 127.0.0.1. */
  readonly host?: string;
}

export interface EmbeddedBroker {
  readonly host: string;
  readonly port: number;
  /** mqtt://host:port */
  readonly url: string;
  /** Number of connected clients. */
  connectedClients(): number;
  /** Stops accepting, disconnects every client and closes the broker. Idempotent. */
  close(): Promise<void>;
}

const LOOPBACK = /^(127\.\d{1,3}\.\d{1,3}\.\d{1,3}|::1|localhost)$/;

/** Starts the broker; rejects with SRC_CONFIG for a non-loopback host and SRC_CONNECT_FAILED when the port is taken. */
export async function startEmbeddedBroker(options: EmbeddedBrokerOptions): Promise<EmbeddedBroker> {
  const host = options.host ?? '127.0.0.1';
  if (!LOOPBACK.test(host)) {
    throw new AgentError('SRC_CONFIG', `the embedded MQTT broker listens on loopback only (it has no TLS or authentication); ${host} is not loopback`);
  }
  const aedes = await Aedes.createBroker();
  const sockets = new Set<Socket>();
  const server: Server = createServer((socket) => {
    sockets.add(socket);
    socket.on('close', () => sockets.delete(socket));
    aedes.handle(socket);
  });
  try {
    await new Promise<void>((resolve, reject) => {
      server.once('error', reject);
      server.listen(options.port, host, () => {
        server.off('error', reject);
        resolve();
      });
    });
  } catch (e) {
    await new Promise<void>((r) => aedes.close(() => r()));
    const code = (e as NodeJS.ErrnoException).code;
    throw new AgentError('SRC_CONNECT_FAILED', `the embedded MQTT broker cannot listen on ${host}:${options.port}${code === 'EADDRINUSE' ? ': the port is in use (is another broker running?)' : `: ${(e as Error).message}`}`, { cause: e });
  }
  const port = (server.address() as AddressInfo).port;
  let closing: Promise<void> | null = null;
  return {
    host,
    port,
    url: `mqtt://${host.includes(':') ? `[${host}]` : host}:${port}`,
    connectedClients: () => aedes.connectedClients,
    close(): Promise<void> {
      if (closing === null) {
        closing = (async () => {
          const stopped = new Promise<void>((r) => server.close(() => r()));
          // aedes.close ends every client connection; sockets still half-open are destroyed so server.close can finish.
          await new Promise<void>((r) => aedes.close(() => r()));
          for (const s of sockets) s.destroy();
          await stopped;
        })();
      }
      return closing;
    },
  };
}
