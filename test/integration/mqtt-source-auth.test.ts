/**
 * Username/password against mosquitto with allow_anonymous false and a
 * password file made by mosquitto_passwd for this test. A refused CONNACK
 * (MQTT 3.1.1 §3.2.2.3, return code 5 "not authorized", from memory) is retried with the
 * back-off, and status() says why.
 */
import { execFileSync } from 'node:child_process';
import { chmodSync, existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, afterEach, beforeAll, describe, expect, test } from 'vitest';
import { MqttSource } from '../../agent/sources/mqtt/mqtt-source.js';
import { waitFor } from '../helpers/free-port.js';
import { Mosquitto, mosquittoAvailable } from '../helpers/mosquitto.js';
import { FrameCollector } from '../helpers/mqtt-test-sink.js';
import { Teardown } from '../helpers/teardown.js';

const PASSWD_TOOL = '/usr/bin/mosquitto_passwd';
const USER = 'seqmon-agent';
const PASSWORD = 'fictional-test-password';

describe.skipIf(!mosquittoAvailable() || !existsSync(PASSWD_TOOL))('MqttSource with broker authentication', () => {
  const td = new Teardown();
  const dir = mkdtempSync(join(tmpdir(), 'seqmon-auth-'));
  let broker: Mosquitto;

  beforeAll(async () => {
    const file = join(dir, 'passwd');
    execFileSync(PASSWD_TOOL, ['-b', '-c', file, USER, PASSWORD], { stdio: 'ignore' });
    // Started as root, mosquitto drops to its own user, which must read the file.
    chmodSync(dir, 0o755);
    chmodSync(file, 0o644);
    broker = await Mosquitto.start({ extraConfig: ['allow_anonymous false', `password_file ${file}`] });
  });
  afterAll(async () => {
    await broker.dispose();
    rmSync(dir, { recursive: true, force: true });
  });
  afterEach(() => td.run());

  test('with the right username and password it connects and receives frames', async () => {
    const sink = new FrameCollector();
    const src = new MqttSource({ url: broker.url, username: USER, password: PASSWORD, reconnect: { minMs: 50, maxMs: 400 } });
    td.add(() => src.destroy());
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await mqtt.connectAsync(broker.url, { username: USER, password: PASSWORD, reconnectPeriod: 0 });
    td.add(() => pub.endAsync(true));
    await pub.publishAsync('seqmon/in/F1/rms', JSON.stringify({ ts: 1772460187250, vll: { ab: 12470.2, bc: 12391.0, ca: 12440.7 } }), { qos: 1 });
    await waitFor(() => sink.frames.length === 1, 5_000);
  });

  test('a refused CONNACK is retried with back-off, and lastError says the broker refused it', async () => {
    const src = new MqttSource({ url: broker.url, username: USER, password: 'wrong', reconnect: { minMs: 50, maxMs: 400 } });
    td.add(() => src.destroy());
    await src.start(new FrameCollector());
    await waitFor(() => src.counters().reconnectAttempts >= 2, 5_000);
    expect(src.status().state).toBe('reconnecting');
    expect(src.status().lastError).toMatch(/Connection refused: Not authorized/);
    expect(src.counters().connects).toBe(0);
  });
});
