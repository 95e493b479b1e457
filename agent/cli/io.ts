import type { Readable, Writable } from 'node:stream';

/** Streams a command talks to; injected so tests run commands in-process. */
export interface CommandIo {
  readonly stdin: Readable;
  readonly stdout: Writable;
  readonly stderr: Writable;
  readonly env: NodeJS.ProcessEnv;
}

export const EXIT_OK = 0;
export const EXIT_RUNTIME = 1;
export const EXIT_USAGE = 2;

/** Writes and waits for drain when the stream's buffer is full, so large outputs keep memory flat. */
export async function writeOut(stream: Writable, text: string): Promise<void> {
  if (!stream.write(text)) {
    await new Promise<void>((resolve) => stream.once('drain', resolve));
  }
}

export interface ParsedArgs {
  readonly positional: string[];
  readonly options: Map<string, string | true>;
}

/** Minimal flag parser: --name value, --name=value, --flag; unknown options are the caller's to refuse. */
export function parseArgs(args: readonly string[], valued: readonly string[]): ParsedArgs {
  const positional: string[] = [];
  const options = new Map<string, string | true>();
  for (let k = 0; k < args.length; k++) {
    const a = args[k]!;
    if (a === '-' || !a.startsWith('-')) {
      positional.push(a);
      continue;
    }
    const eq = a.indexOf('=');
    const name = a.slice(2, eq === -1 ? undefined : eq);
    if (!a.startsWith('--') || name === '') throw new UsageError(`unknown option "${a}"`);
    if (eq !== -1) options.set(name, a.slice(eq + 1));
    else if (valued.includes(name)) {
      const v = args[k + 1];
      if (v === undefined) throw new UsageError(`option --${name} needs a value`);
      options.set(name, v);
      k++;
    } else options.set(name, true);
  }
  return { positional, options };
}

export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}
