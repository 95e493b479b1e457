/**
 * `seqmon run [--config FILE]` (the service) and `seqmon demo` (the same
 * service on the shipped demo configuration: embedded broker, the fictional
 * demo substation, SQLite, dashboard on 127.0.0.1:8080). Both run until
 * SIGINT/SIGTERM, then shut down gracefully within a deadline.
 */
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { formatConfigErrors, loadConfig } from '../config/load-config.js';
import type { SeqmonConfig } from '../config/types.js';
import { configWarnings } from '../config/warnings.js';
import { isAgentError } from '../core/errors.js';
import { loggerFor } from '../logging.js';
import { SeqmonService } from '../main.js';
import type { CommandIo } from './io.js';
import { EXIT_OK, EXIT_RUNTIME, EXIT_USAGE, parseArgs, UsageError, writeOut } from './io.js';

/** After a stop signal, close() gets this long to drain and flush before everything is aborted. */
const SHUTDOWN_DEADLINE_MS = 10_000;

const RUN_USAGE = `usage: seqmon run [--config FILE]
  Runs the service. Without a file it uses the defaults (broker mqtt://127.0.0.1:1883,
  feeders discovered from topics, 60 Hz, SQLite at ./data/seqmon.db, HTTP on 127.0.0.1:8080).
  SEQMON_MQTT_URL, SEQMON_STORE, SEQMON_HTTP_HOST, SEQMON_HTTP_PORT, SEQMON_NOMINAL_HZ and
  SEQMON_DATA_DIR override the file and the defaults.`;

const DEMO_USAGE = `usage: seqmon demo
  Embedded MQTT broker, a simulator of a fictional substation, the agent, SQLite under
  ./data/demo and the dashboard on http://127.0.0.1:8080 (SEQMON_HTTP_PORT changes the port).`;

export async function runCommand(args: readonly string[], io: CommandIo): Promise<number> {
  let configPath: string | null = null;
  try {
    const { positional, options } = parseArgs(args, ['config']);
    if (options.has('help')) {
      await writeOut(io.stdout, `${RUN_USAGE}\n`);
      return EXIT_OK;
    }
    for (const k of options.keys()) if (k !== 'config') throw new UsageError(`unknown option --${k}`);
    if (positional.length > 0) throw new UsageError(`unexpected argument "${positional[0]!}"`);
    const c = options.get('config');
    if (c === true) throw new UsageError('--config needs a file');
    configPath = c ?? null;
  } catch (e) {
    if (e instanceof UsageError) {
      await writeOut(io.stderr, `seqmon run: ${e.message}\n${RUN_USAGE}\n`);
      return EXIT_USAGE;
    }
    throw e;
  }
  return serve(configPath, io, false);
}

export async function demoCommand(args: readonly string[], io: CommandIo): Promise<number> {
  if (args.includes('--help')) {
    await writeOut(io.stdout, `${DEMO_USAGE}\n`);
    return EXIT_OK;
  }
  if (args.length > 0) {
    await writeOut(io.stderr, `seqmon demo: unexpected argument "${args[0]!}"\n${DEMO_USAGE}\n`);
    return EXIT_USAGE;
  }
  return serve(demoConfigPath(), io, true);
}

async function serve(configPath: string | null, io: CommandIo, demo: boolean): Promise<number> {
  let config: SeqmonConfig;
  try {
    config = await loadConfig(configPath, io.env);
  } catch (e) {
    if (isAgentError(e) && e.code.startsWith('CFG_')) {
      await writeOut(io.stderr, `${formatConfigErrors(e)}\n`);
      return EXIT_USAGE;
    }
    throw e;
  }
  const logger = loggerFor(config);
  for (const w of configWarnings(config)) logger.warn(w);

  let service: SeqmonService;
  try {
    service = await SeqmonService.start(config, { logger, demo });
  } catch (e) {
    const code = isAgentError(e) ? e.code : 'INTERNAL';
    logger.fatal({ code, err: e }, `seqmon could not start: ${e instanceof Error ? e.message : String(e)}`);
    await writeOut(io.stderr, `seqmon: could not start (${code}): ${e instanceof Error ? e.message : String(e)}\n`);
    return isAgentError(e) && (e.code.startsWith('CFG_') || e.code === 'API_INSECURE_BIND') ? EXIT_USAGE : EXIT_RUNTIME;
  }
  if (demo) {
    await writeOut(
      io.stdout,
      `\nseqmon demo running: dashboard ${service.url ?? '(HTTP disabled)'}\n` +
        'The demo substation and all its data are FICTIONAL, made up by the built-in simulator.\n' +
        'Press Ctrl+C to stop.\n\n',
    );
  }

  return new Promise<number>((resolve) => {
    let stopping = false;
    const stop = (signal: string): void => {
      if (stopping) return;
      stopping = true;
      logger.info({ signal }, 'stopping');
      const deadline = setTimeout(() => {
        logger.error(`shutdown did not finish within ${SHUTDOWN_DEADLINE_MS} ms; aborting`);
        service.destroy(new Error('shutdown deadline'));
        resolve(EXIT_RUNTIME);
      }, SHUTDOWN_DEADLINE_MS);
      deadline.unref();
      service.close().then(
        () => {
          clearTimeout(deadline);
          process.off('SIGINT', onInt);
          process.off('SIGTERM', onTerm);
          resolve(EXIT_OK);
        },
        (err: unknown) => {
          clearTimeout(deadline);
          logger.error({ err }, 'error during shutdown');
          resolve(EXIT_RUNTIME);
        },
      );
    };
    const onInt = (): void => stop('SIGINT');
    const onTerm = (): void => stop('SIGTERM');
    process.on('SIGINT', onInt);
    process.on('SIGTERM', onTerm);
  });
}

/** config/demo.yaml of this package, from source (agent/cli) or compiled (dist/agent/cli). */
function demoConfigPath(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let k = 0; k < 5; k++) {
    const candidate = join(dir, 'config', 'demo.yaml');
    if (existsSync(candidate)) return candidate;
    dir = dirname(dir);
  }
  return join(process.cwd(), 'config', 'demo.yaml');
}
