/**
 * A real mosquitto for tests and benchmarks: own config in a temporary folder,
 * loopback only, a free port, stopped and restarted by PID on the same port.
 *
 * Settings (shared/SERVICES.md): set_tcp_nodelay true because Nagle holds back
 * small frames and halves a lone QoS 1 publisher; max_queued_messages 0 because
 * the default of 1000 per client silently drops QoS 1 messages to a subscriber
 * that falls behind in a burst, which would look like loss in the tests.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { chmodSync, existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { connect } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { freePort } from './free-port.js';

export const MOSQUITTO_BIN = '/usr/sbin/mosquitto';

export function mosquittoAvailable(): boolean {
  return existsSync(MOSQUITTO_BIN);
}

export interface MosquittoOptions {
  /** Extra configuration lines appended to the minimal config. */
  readonly extraConfig?: readonly string[];
  /** Keep sessions, subscriptions and retained messages across restart() (saved on SIGTERM). Default false. */
  readonly persistence?: boolean;
  /** How long to wait for the listener, ms. */
  readonly startTimeoutMs?: number;
}

const START_TIMEOUT_MS = 5_000;
const STOP_TIMEOUT_MS = 3_000;

export class Mosquitto {
  private child: ChildProcess | null = null;
  private stderr = '';

  private constructor(
    readonly port: number,
    private readonly dir: string,
    private readonly confPath: string,
    private readonly startTimeoutMs: number,
  ) {}

  static async start(options: MosquittoOptions = {}): Promise<Mosquitto> {
    const port = await freePort();
    const dir = mkdtempSync(join(tmpdir(), 'seqmon-mosquitto-'));
    const confPath = join(dir, 'mosquitto.conf');
    const lines = [
      `listener ${port} 127.0.0.1`,
      'allow_anonymous true',
      ...(options.persistence === true ? ['persistence true', `persistence_location ${dir}/`] : ['persistence false']),
      'set_tcp_nodelay true',
      'max_queued_messages 0',
      'log_dest stderr',
      'log_type error',
      'log_type warning',
      ...(options.extraConfig ?? []),
    ];
    writeFileSync(confPath, `${lines.join('\n')}\n`);
    // Started as root, mosquitto drops to the "mosquitto" user, which must be able to write its database here.
    if (options.persistence === true) chmodSync(dir, 0o777);
    const broker = new Mosquitto(port, dir, confPath, options.startTimeoutMs ?? START_TIMEOUT_MS);
    await broker.launch();
    return broker;
  }

  get url(): string {
    return `mqtt://127.0.0.1:${this.port}`;
  }

  get pid(): number | null {
    return this.child?.pid ?? null;
  }

  get running(): boolean {
    return this.child !== null && this.child.exitCode === null && this.child.signalCode === null;
  }

  private async launch(): Promise<void> {
    this.stderr = '';
    const child = spawn(MOSQUITTO_BIN, ['-c', this.confPath], { stdio: ['ignore', 'ignore', 'pipe'] });
    this.child = child;
    child.stderr?.setEncoding('utf8');
    child.stderr?.on('data', (chunk: string) => {
      // Keep the tail only: enough to explain a failed start.
      this.stderr = (this.stderr + chunk).slice(-4000);
    });
    const deadline = Date.now() + this.startTimeoutMs;
    for (;;) {
      if (child.exitCode !== null || child.signalCode !== null) {
        throw new Error(`mosquitto exited during start (code ${child.exitCode}, signal ${child.signalCode}): ${this.stderr.trim()}`);
      }
      if (await canConnect(this.port)) return;
      if (Date.now() > deadline) {
        await this.stop();
        throw new Error(`mosquitto did not accept connections on 127.0.0.1:${this.port} within ${this.startTimeoutMs} ms: ${this.stderr.trim()}`);
      }
      await sleep(20);
    }
  }

  /** Stops the broker by PID (SIGTERM, then SIGKILL after a bound). Idempotent. */
  async stop(): Promise<void> {
    const child = this.child;
    this.child = null;
    if (child === null || child.exitCode !== null || child.signalCode !== null || child.pid === undefined) return;
    const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
    process.kill(child.pid, 'SIGTERM');
    const timer = setTimeout(() => {
      if (child.exitCode === null && child.signalCode === null && child.pid !== undefined) process.kill(child.pid, 'SIGKILL');
    }, STOP_TIMEOUT_MS);
    await exited;
    clearTimeout(timer);
  }

  /** Stop and start again on the same port (sessions and retained messages are lost unless persistence is on). */
  async restart(): Promise<void> {
    await this.stop();
    await this.launch();
  }

  /** Stops the broker and removes its folder. */
  async dispose(): Promise<void> {
    await this.stop();
    rmSync(this.dir, { recursive: true, force: true });
  }
}

function canConnect(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = connect({ host: '127.0.0.1', port });
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => {
      socket.destroy();
      resolve(false);
    });
  });
}

function sleep(ms: number): Promise<void> {
  return new Promise((r) => setTimeout(r, ms));
}
