/**
 * The `seqmon` command. Each subcommand lives in its own module and is loaded
 * on demand, so `seqmon analyze` does not pay for the MQTT/HTTP stack.
 * Exit codes: 0 success, 1 runtime failure, 2 bad usage or bad input.
 */
import { readFileSync } from 'node:fs';
import type { CommandIo } from './io.js';
import { EXIT_OK, EXIT_USAGE } from './io.js';

const HELP = `seqmon: live three-phase unbalance monitoring for distribution feeders

usage: seqmon <command> [options]

commands:
  demo                       embedded broker + fictional demo substation + agent + dashboard on http://127.0.0.1:8080
  run [--config FILE]        the service (defaults without a file; SEQMON_* environment variables override)
  analyze [FILE|-]           batch analysis of JSON-line frames   (seqmon analyze --help)
  replay RECORD.cfg          analysis of a COMTRADE record        (seqmon replay --help)
  check-config FILE          validate a configuration and explain every error
  --version, --help

Caution: seqmon reports conditions; it does not operate equipment. Any switching or load
transfer it prompts must follow the utility's switching procedures, local codes and
licensed practice.`;

type Command = (args: string[], io: CommandIo) => Promise<number>;

const COMMANDS: Record<string, () => Promise<Command>> = {
  analyze: async () => (await import('./analyze.js')).analyzeCommand,
  replay: async () => (await import('./replay.js')).replayCommand,
  'check-config': async () => (await import('./check-config.js')).checkConfigCommand,
  run: async () => (await import('./run.js')).runCommand,
  demo: async () => (await import('./run.js')).demoCommand,
};

export async function main(argv: string[], io: CommandIo): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    io.stdout.write(`${HELP}\n`);
    return name === undefined ? EXIT_USAGE : EXIT_OK;
  }
  if (name === '--version') {
    const pkg = JSON.parse(readFileSync(new URL('../../../package.json', import.meta.url), 'utf8')) as { version: string };
    io.stdout.write(`${pkg.version}\n`);
    return EXIT_OK;
  }
  const load = COMMANDS[name];
  if (load === undefined) {
    io.stderr.write(`seqmon: unknown command "${name}"\n\n${HELP}\n`);
    return EXIT_USAGE;
  }
  const command = await load();
  return command(rest, io);
}

