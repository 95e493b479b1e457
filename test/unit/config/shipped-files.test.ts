import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../../agent/config/load-config.js';
import { configWarnings } from '../../../agent/config/warnings.js';
import { WRENMOOR_FEEDERS } from '../../../agent/sources/simulator/substation.js';

const CONFIG_DIR = fileURLToPath(new URL('../../../config/', import.meta.url));
const YAML_FILES = readdirSync(CONFIG_DIR).filter((f) => /\.ya?ml$/.test(f));
/** The variables the production example names for its secrets. */
const SECRETS = { SEQMON_MQTT_PASSWORD: 'pw', SEQMON_OPCUA_PASSWORD: 'pw', SEQMON_HTTP_TOKEN: 'a-long-enough-api-token' };

describe('shipped configuration files', () => {
  test('config/ ships the demo and the production example', () => {
    expect(YAML_FILES).toEqual(expect.arrayContaining(['demo.yaml', 'production.example.yaml']));
  });

  test.each(YAML_FILES)('%s validates against the schema', async (name) => {
    const c = await loadConfig(join(CONFIG_DIR, name), SECRETS);
    expect(c.source).toBe(join(CONFIG_DIR, name));
  });

  test('the demo runs the simulator through an embedded loopback broker and lists every simulated feeder', async () => {
    const c = await loadConfig(join(CONFIG_DIR, 'demo.yaml'), {});
    expect(c.simulator.enabled).toBe(true);
    expect(c.mqtt.embeddedBroker).toBe(true);
    expect(c.http).toMatchObject({ host: '127.0.0.1', port: 8080 });
    expect(c.feeders.list.map((f) => f.id)).toEqual(WRENMOOR_FEEDERS.map((f) => f.id));
    for (const f of c.feeders.list) expect(f.name).toMatch(/fictional/);
    expect(configWarnings(c)).toEqual([]);
  });

  test('the production example leaves the simulator off and takes its secrets from the environment', async () => {
    const text = readFileSync(join(CONFIG_DIR, 'production.example.yaml'), 'utf8');
    expect(text).not.toMatch(/^\s*(password|token):/m);
    const c = await loadConfig(join(CONFIG_DIR, 'production.example.yaml'), SECRETS);
    expect(c.simulator.enabled).toBe(false);
    expect(c.mqtt.password).toBe('pw');
    expect(c.http.token).toBe(SECRETS.SEQMON_HTTP_TOKEN);
  });

  test('the production example shows every key of the schema', () => {
    const schema = JSON.parse(readFileSync(join(CONFIG_DIR, 'schema.json'), 'utf8')) as { properties: Record<string, { properties?: Record<string, { 'x-renamedTo'?: string }> }> };
    const text = readFileSync(join(CONFIG_DIR, 'production.example.yaml'), 'utf8');
    const missing: string[] = [];
    for (const [section, def] of Object.entries(schema.properties)) {
      if (!new RegExp(`^${section}:`, 'm').test(text)) missing.push(section);
      for (const [key, sub] of Object.entries(def.properties ?? {})) {
        if (sub['x-renamedTo'] !== undefined) continue;
        // Alternatives shown commented out count as documented (password vs passwordEnv, token vs tokenEnv).
        if (!new RegExp(`^\\s*#?\\s*${key}:`, 'm').test(text) && !(key === 'password' || key === 'token')) missing.push(`${section}.${key}`);
      }
    }
    expect(missing).toEqual([]);
  });

  test('the mosquitto example turns Nagle off and lifts the 1000-message queue limit (shared/SERVICES.md)', () => {
    const conf = readFileSync(join(CONFIG_DIR, 'mosquitto.example.conf'), 'utf8');
    expect(conf).toMatch(/^set_tcp_nodelay true$/m);
    expect(conf).toMatch(/^max_queued_messages 0$/m);
  });
});
