/**
 * MqttSource over TLS against mosquitto with a throw-away CA made by openssl
 * for this test (EC P-256, one day, IP SAN 127.0.0.1). The CA is given as a
 * file path, as in a production config.
 */
import { execFileSync } from 'node:child_process';
import { chmodSync, existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, afterEach, beforeAll, describe, expect, test } from 'vitest';
import { MqttSource } from '../../agent/sources/mqtt/mqtt-source.js';
import { waitFor } from '../helpers/free-port.js';
import { Mosquitto, mosquittoAvailable } from '../helpers/mosquitto.js';
import { FrameCollector } from '../helpers/mqtt-test-sink.js';
import { Teardown } from '../helpers/teardown.js';

const OPENSSL = '/usr/bin/openssl';
const dir = mkdtempSync(join(tmpdir(), 'seqmon-tls-'));
const file = (name: string): string => join(dir, name);

function makeCertificates(): void {
  const ssl = (...args: string[]): void => void execFileSync(OPENSSL, args, { stdio: 'ignore' });
  const ec = ['-newkey', 'ec', '-pkeyopt', 'ec_paramgen_curve:prime256v1', '-nodes'];
  ssl('req', '-x509', ...ec, '-keyout', file('ca.key'), '-out', file('ca.crt'), '-subj', '/CN=seqmon test CA (fictional)', '-days', '1');
  ssl('req', ...ec, '-keyout', file('server.key'), '-out', file('server.csr'), '-subj', '/CN=127.0.0.1');
  writeFileSync(file('san.ext'), 'subjectAltName=IP:127.0.0.1\n');
  ssl('x509', '-req', '-in', file('server.csr'), '-CA', file('ca.crt'), '-CAkey', file('ca.key'), '-CAcreateserial', '-out', file('server.crt'), '-days', '1', '-extfile', file('san.ext'));
  // Started as root, mosquitto drops to its own user, which must read these.
  chmodSync(dir, 0o755);
  for (const f of ['ca.crt', 'server.crt', 'server.key']) chmodSync(file(f), 0o644);
}

describe.skipIf(!mosquittoAvailable() || !existsSync(OPENSSL))('MqttSource over TLS', () => {
  const td = new Teardown();
  let broker: Mosquitto;

  beforeAll(async () => {
    makeCertificates();
    broker = await Mosquitto.start({ extraConfig: [`cafile ${file('ca.crt')}`, `certfile ${file('server.crt')}`, `keyfile ${file('server.key')}`] });
  });
  afterAll(async () => {
    await broker.dispose();
    rmSync(dir, { recursive: true, force: true });
  });
  afterEach(() => td.run());

  test('with the CA given as a file path it connects over mqtts:// and receives frames', async () => {
    const sink = new FrameCollector();
    const src = new MqttSource({ url: `mqtts://127.0.0.1:${broker.port}`, tls: { ca: file('ca.crt') }, reconnect: { minMs: 50, maxMs: 400 } });
    td.add(() => src.destroy());
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await mqtt.connectAsync(`mqtts://127.0.0.1:${broker.port}`, { ca: readFileSync(file('ca.crt')), reconnectPeriod: 0 });
    td.add(() => pub.endAsync(true));
    await pub.publishAsync('seqmon/in/F1/rms', JSON.stringify({ ts: 1772460187250, vll: { ab: 12470.2, bc: 12391.0, ca: 12440.7 } }), { qos: 1 });
    await waitFor(() => sink.frames.length === 1, 5_000);
    expect(sink.frames[0]!.feeder).toBe('F1');
  });

  test('a broker certificate from an unknown CA is refused and the source keeps retrying, saying why', async () => {
    const src = new MqttSource({ url: `mqtts://127.0.0.1:${broker.port}`, tls: {}, reconnect: { minMs: 50, maxMs: 400 } });
    td.add(() => src.destroy());
    await src.start(new FrameCollector());
    await waitFor(() => src.counters().reconnectAttempts >= 1, 5_000);
    expect(src.status().state).toBe('reconnecting');
    expect(src.status().lastError).toMatch(/certificate|self.signed|issuer/i);
  });
});
