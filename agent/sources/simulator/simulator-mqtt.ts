/**
 * Publishes the simulated substation's frames to an MQTT broker under
 * <inputPrefix>/<feeder>/<kind>, so the demo's frames take exactly the path
 * real ones take (broker -> MQTT source -> pipeline). While the connection is
 * down, frames are skipped and counted rather than queued: a live simulator
 * has no history worth replaying.
 */
import mqtt, { type MqttClient } from 'mqtt';
import type { Scheduler } from '../../core/ports.js';
import type { SubstationSimulator } from './generator.js';
import { SimulatorLoop, simulatedFrameTopic } from './simulator-loop.js';
import type { SimulatorLoopStats } from './simulator-loop.js';

export interface SimulatorPublisherOptions {
  readonly url: string;
  readonly inputPrefix: string;
  readonly simulator: SubstationSimulator;
  readonly scheduler: Scheduler;
  readonly qos?: 0 | 1;
  readonly username?: string | undefined;
  readonly password?: string | undefined;
  readonly clientId?: string | undefined;
  /** Give up connecting after this long, ms (the simulator starts next to its broker, so this is short). */
  readonly connectTimeoutMs?: number;
}

export interface SimulatorPublisher {
  stats(): SimulatorLoopStats & { readonly connected: boolean };
  /** Stops generating, waits for in-flight publishes, disconnects. Idempotent. */
  close(): Promise<void>;
  /** Stops at once. Idempotent. */
  destroy(err?: Error): void;
}

/** Connects, then starts publishing; rejects if the broker cannot be reached within connectTimeoutMs. */
export async function startSimulatorPublisher(options: SimulatorPublisherOptions): Promise<SimulatorPublisher> {
  const qos = options.qos ?? 0;
  const client: MqttClient = await mqtt.connectAsync(options.url, {
    clientId: options.clientId ?? `seqmon-sim-${Math.floor(Math.random() * 0xffffffff).toString(16).padStart(8, '0')}`,
    username: options.username,
    password: options.password,
    protocolVersion: 4,
    clean: true,
    connectTimeout: options.connectTimeoutMs ?? 5_000,
    reconnectPeriod: 1_000,
  });
  client.on('error', () => {
    // Connection errors show as connected === false; frames are skipped until it comes back.
  });
  const loop = new SimulatorLoop({
    simulator: options.simulator,
    scheduler: options.scheduler,
    publish: (frame) => {
      if (!client.connected) return;
      client.publish(simulatedFrameTopic(options.inputPrefix, frame), JSON.stringify(frame.payload), { qos });
    },
  });
  loop.start();

  let closing: Promise<void> | null = null;
  return {
    stats: () => ({ ...loop.stats(), connected: client.connected }),
    close(): Promise<void> {
      if (closing === null) {
        loop.destroy();
        closing = client.endAsync(false).catch(() => undefined);
      }
      return closing;
    },
    destroy(): void {
      loop.destroy();
      if (closing === null) closing = client.endAsync(true).catch(() => undefined);
    },
  };
}
