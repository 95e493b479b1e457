/**
 * `seqmon analyze [FILE|-] [--nominal-hz 50|60] [--format jsonl|csv]`:
 * batch analysis of input frames, one JSON (or CSV) line per phasor/rms frame
 * and per basic window of samples. Bad lines are reported on stderr with the
 * line number, field and reason, counted, and skipped; the exit code is 2 if
 * any line was rejected.
 */
import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';
import type { Readable } from 'node:stream';
import { DEFAULT_DETECTION } from '../core/detect/settings.js';
import { clearOutput, createOutput, Pipeline } from '../core/pipeline.js';
import { resultToWire } from '../core/result.js';
import { resultCsvHeader, resultCsvRow } from '../core/result-csv.js';
import type { CommandIo } from './io.js';
import { EXIT_OK, EXIT_RUNTIME, EXIT_USAGE, parseArgs, UsageError, writeOut } from './io.js';

export const ANALYZE_USAGE = `usage: seqmon analyze [FILE|-] [--nominal-hz 50|60] [--nominal-voltage VOLTS_LN] [--feeder ID] [--format jsonl|csv]
  Reads JSON lines (phasor, rms or samples frames; optional "feeder" and "kind" fields)
  from FILE or standard input and writes one result line per phasor/rms frame and per
  basic window (10 cycles at 50 Hz, 12 at 60 Hz) of samples.
  --feeder ID   feeder for lines that name none (default "default")`;

const DEFAULT_FEEDER = 'default';

export async function analyzeCommand(args: readonly string[], io: CommandIo): Promise<number> {
  let nominalHz: 50 | 60 = 60;
  let nominalVoltage: number | null = null;
  let format: 'jsonl' | 'csv' = 'jsonl';
  let feeder = DEFAULT_FEEDER;
  let file = '-';
  try {
    const { positional, options } = parseArgs(args, ['nominal-hz', 'format', 'nominal-voltage', 'feeder']);
    for (const name of options.keys()) {
      if (!['nominal-hz', 'format', 'nominal-voltage', 'feeder', 'help'].includes(name)) throw new UsageError(`unknown option --${name}`);
    }
    if (options.has('help')) {
      await writeOut(io.stdout, `${ANALYZE_USAGE}\n`);
      return EXIT_OK;
    }
    if (positional.length > 1) throw new UsageError('give at most one input file');
    file = positional[0] ?? '-';
    const hz = options.get('nominal-hz');
    if (hz !== undefined) {
      if (hz !== '50' && hz !== '60') throw new UsageError(`--nominal-hz must be 50 or 60, found "${String(hz)}"`);
      nominalHz = hz === '50' ? 50 : 60;
    }
    const fmt = options.get('format');
    if (fmt !== undefined) {
      if (fmt !== 'jsonl' && fmt !== 'csv') throw new UsageError(`--format must be jsonl or csv, found "${String(fmt)}"`);
      format = fmt;
    }
    const nv = options.get('nominal-voltage');
    if (nv !== undefined) {
      const x = Number(nv);
      if (nv === true || !Number.isFinite(x) || x <= 0) throw new UsageError(`--nominal-voltage must be a positive number of volts (line-to-neutral), found "${String(nv)}"`);
      nominalVoltage = x;
    }
    const fd = options.get('feeder');
    if (fd !== undefined) {
      if (fd === true || !/^[A-Za-z0-9_.-]{1,64}$/.test(fd)) throw new UsageError('--feeder must match [A-Za-z0-9_.-]{1,64}');
      feeder = fd;
    }
  } catch (e) {
    if (e instanceof UsageError) {
      await writeOut(io.stderr, `seqmon analyze: ${e.message}\n${ANALYZE_USAGE}\n`);
      return EXIT_USAGE;
    }
    throw e;
  }

  let input: Readable;
  if (file === '-') input = io.stdin;
  else {
    input = createReadStream(file);
    const opened = await new Promise<Error | null>((resolve) => {
      input.once('open', () => resolve(null));
      input.once('error', (err) => resolve(err));
    });
    if (opened !== null) {
      await writeOut(io.stderr, `seqmon analyze: cannot read ${file}: ${opened.message}\n`);
      return EXIT_USAGE;
    }
  }

  const pipeline = new Pipeline({
    discoverFeeders: true,
    defaults: { nominalHz, nominalVoltageLN: nominalVoltage, detection: DEFAULT_DETECTION },
    feeders: [],
  });
  const out = createOutput();
  let rejected = 0;
  let lineNo = 0;
  const emit = async (): Promise<void> => {
    for (const r of out.results) await writeOut(io.stdout, format === 'csv' ? `${resultCsvRow(r)}\n` : `${JSON.stringify(resultToWire(r))}\n`);
    for (const rej of out.rejections) {
      rejected++;
      const where = rej.field === null ? '' : ` ${rej.field}:`;
      await writeOut(io.stderr, `line ${lineNo}:${where} ${rej.message} (${rej.code})\n`);
    }
    clearOutput(out);
  };

  if (format === 'csv') await writeOut(io.stdout, `${resultCsvHeader()}\n`);
  try {
    const lines = createInterface({ input, crlfDelay: Infinity });
    for await (const line of lines) {
      lineNo++;
      if (line.trim() === '') continue;
      pipeline.ingest({ payload: line, feeder: lineFeeder(line) ? undefined : feeder, origin: `line ${lineNo}` }, out);
      await emit();
    }
  } catch (e) {
    await writeOut(io.stderr, `seqmon analyze: reading input failed: ${(e as Error).message}\n`);
    return EXIT_RUNTIME;
  }
  if (rejected > 0) {
    await writeOut(io.stderr, `seqmon analyze: ${rejected} of ${lineNo} line(s) rejected\n`);
    return EXIT_USAGE;
  }
  return EXIT_OK;
}

/** True when the line names its own feeder (cheap check; the validator does the real one). */
function lineFeeder(line: string): boolean {
  return line.includes('"feeder"');
}
