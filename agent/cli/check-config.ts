/** `seqmon check-config FILE`: validates a configuration and explains every error (exit 2), or summarises it (exit 0). */
import { isAgentError } from '../core/errors.js';
import { ENV_OVERRIDES } from '../config/env-overrides.js';
import { formatConfigErrors, loadConfig } from '../config/load-config.js';
import type { SeqmonConfig } from '../config/types.js';
import { configWarnings } from '../config/warnings.js';
import { EXIT_OK, EXIT_RUNTIME, EXIT_USAGE, writeOut } from './io.js';
import type { CommandIo } from './io.js';

const USAGE = 'usage: seqmon check-config FILE\n  Validates FILE (YAML) against config/schema.json, with the SEQMON_* environment overrides applied, and explains every problem.\n';

export async function checkConfigCommand(args: readonly string[], io: CommandIo): Promise<number> {
  if (args.includes('--help') || args.includes('-h')) {
    await writeOut(io.stdout, USAGE);
    return EXIT_OK;
  }
  const unknown = args.filter((a) => a.startsWith('-') && a !== '-');
  if (unknown.length > 0 || args.length !== 1) {
    await writeOut(io.stderr, `seqmon check-config: ${unknown.length > 0 ? `unknown option ${unknown[0]}` : args.length === 0 ? 'give the configuration file to check' : 'give exactly one file'}\n${USAGE}`);
    return EXIT_USAGE;
  }
  const file = args[0]!;
  let config: SeqmonConfig;
  try {
    config = await loadConfig(file, io.env);
  } catch (e) {
    if (isAgentError(e) && e.code.startsWith('CFG_')) {
      await writeOut(io.stderr, `${formatConfigErrors(e)}\n`);
      return EXIT_USAGE;
    }
    await writeOut(io.stderr, `seqmon check-config: ${e instanceof Error ? e.message : String(e)}\n`);
    return EXIT_RUNTIME;
  }
  await writeOut(io.stdout, summary(config, io.env));
  return EXIT_OK;
}

function summary(c: SeqmonConfig, env: CommandIo['env']): string {
  const lines = [`${c.source ?? 'configuration'} is valid.`];
  const overrides = ENV_OVERRIDES.filter((n) => (env[n] ?? '').trim() !== '');
  if (overrides.length > 0) lines.push(`  environment overrides applied: ${overrides.join(', ')}`);
  lines.push(
    c.mqtt.enabled
      ? `  mqtt:     ${c.mqtt.url}${c.mqtt.embeddedBroker ? ' (embedded broker)' : ''}, input ${c.mqtt.inputPrefix}/<feeder>/<kind>, output ${c.mqtt.outputPrefix}${c.mqtt.publishResults ? '' : ' (publishing off)'}, QoS ${c.mqtt.qos}`
      : '  mqtt:     off',
  );
  lines.push(c.opcua.enabled ? `  opcua:    ${c.opcua.endpointUrl ?? ''} (${c.opcua.securityMode}/${c.opcua.securityPolicy}), ${c.opcua.feeders.length} feeder(s)` : '  opcua:    off');
  lines.push(c.store.kind === 'sqlite' ? `  store:    sqlite ${c.store.path}` : `  store:    influx ${c.store.url ?? ''}/${c.store.database ?? ''}, spool ${c.store.spool.dir}`);
  lines.push(
    c.http.enabled ? `  http:     ${c.http.tls === null ? 'http' : 'https'}://${c.http.host}:${c.http.port}${c.http.token === null ? '' : ' (token required)'}` : '  http:     off',
  );
  lines.push(
    `  feeders:  ${c.feeders.list.length} listed${c.feeders.list.length > 0 ? ` (${c.feeders.list.map((f) => f.id).join(', ')})` : ''}, discovery ${c.feeders.discover ? 'on' : 'off'}, default ${c.feeders.defaults.nominalHz} Hz`,
  );
  if (c.simulator.enabled) lines.push(`  simulator: on (fictional demo substation), seed ${c.simulator.seed}, speed ×${c.simulator.speed}`);
  for (const w of configWarnings(c)) lines.push(`  warning:  ${w}`);
  return `${lines.join('\n')}\n`;
}
