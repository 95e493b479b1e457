/**
 * `seqmon replay RECORD.cfg [--format jsonl|csv] [--nominal-hz 50|60] ...`:
 * analysis of a COMTRADE record (IEEE C37.111-1991/1999/2013, .cfg + .dat or
 * .cff). For each nominal cycle of each fixed-rate segment: fundamental
 * phasors of the three phase voltages and currents by a one-cycle DFT
 * (agent/core/dsp/cycle-phasor.ts), then the sequence quantities
 * (agent/core/sequence/quantities.ts). One output row per cycle with the
 * fields of the `sequence` output and window "cycle". The cycle results also
 * drive the feeder detector (fault classification, open phase; 3-s unbalance
 * alarms through the interval aggregator), whose alarms and disturbance
 * events are written as JSON lines (jsonl) or to stderr (csv).
 *
 * Exit codes: 0 success, 1 runtime failure, 2 bad usage or bad input
 * (unreadable or malformed record, unsupported feature).
 */
import type { Writable } from 'node:stream';
import { IntervalAggregator } from '../core/aggregate/interval-aggregator.js';
import { CyclePhasorEstimator, frequencyFromCycleAdvance, MIN_SAMPLES_PER_CYCLE } from '../core/dsp/cycle-phasor.js';
import { VoltageEventDetector } from '../core/dsp/voltage-events.js';
import { isAgentError } from '../core/errors.js';
import { createDetectionOutput, FeederDetector, type DetectionOutput } from '../core/detect/feeder-detector.js';
import { FAULT_DROPOUT_MS } from '../core/detect/fault-recorder.js';
import { DEFAULT_DETECTION, type DetectionSettings } from '../core/detect/settings.js';
import { FEEDER_ID_PATTERN } from '../core/frames.js';
import { resultToWire, type SequenceResult } from '../core/result.js';
import { resultCsvHeader, resultCsvRow } from '../core/result-csv.js';
import { quantityFromPhasors, SequenceScratch, voltageFromPhasors } from '../core/sequence/quantities.js';
import { mapPhaseChannels, type ChannelOverride, type ChannelRef, type PhaseChannels } from '../sources/comtrade/channel-map.js';
import { feederIdFrom } from '../sources/comtrade/comtrade-source.js';
import { readComtradeRecord } from '../sources/comtrade/read-record.js';
import { requireFixedRate } from '../sources/comtrade/record.js';
import { scaledChannel } from '../sources/comtrade/samples-frames.js';
import type { ComtradeRecord } from '../sources/comtrade/types.js';
import { alarmToWire, eventToWire } from '../server/wire.js';
import { EXIT_OK, EXIT_RUNTIME, EXIT_USAGE, parseArgs, UsageError, writeOut } from './io.js';

export const REPLAY_USAGE = `usage: seqmon replay RECORD.cfg|RECORD.cff [options]
  Per-cycle sequence quantities of a COMTRADE record (IEEE C37.111-1991/1999/2013),
  with the alarms and classified disturbances they lead to.
  --format jsonl|csv        output format (default jsonl); csv has a header naming units,
                            and alarms/events then go to stderr
  --nominal-hz 50|60        nominal frequency (default: the record's lf when 50 or 60)
  --feeder ID               feeder id for the output (default: from the station name)
  --voltage CH,CH,CH        phase a, b, c voltage channels (ch_id or An number)
  --current CH,CH,CH        phase a, b, c current channels (ch_id or An number)
  --nominal-voltage VOLTS   nominal line-to-neutral voltage, primary (enables the voltage-collapse
                            checks of open-phase detection and dip/swell/interruption flags)
  --fault-pickup AMPS       phase current above which a disturbance is classified (default ${DEFAULT_DETECTION.fault.pickupA} A)
  --utc-offset MINUTES      offset from UTC of the recorded times, for 1991/1999 records (default 0)
  --secondary               report secondary instead of primary values
Caution: results are for analysis; switching or load transfer prompted by them must follow
the utility's switching procedures, local codes and licensed practice.`;

/**
 * A cycle-to-cycle angle advance beyond ±10 % of nominal is a phase jump
 * (fault inception, switching), not a frequency: reported as null (common
 * practice; frequency deviations on interconnected systems stay well inside).
 */
const MAX_FREQ_DEVIATION_REL = 0.1;

interface ReplayOptions {
  file: string;
  format: 'jsonl' | 'csv';
  nominalHz: 50 | 60 | null;
  feeder: string | null;
  override: ChannelOverride;
  nominalVoltage: number | null;
  faultPickupA: number;
  utcOffsetMinutes: number | undefined;
  side: 'primary' | 'secondary';
}

const VALUED = ['format', 'nominal-hz', 'feeder', 'voltage', 'current', 'nominal-voltage', 'fault-pickup', 'utc-offset'];

function parseReplayArgs(args: readonly string[]): ReplayOptions | 'help' {
  const { positional, options } = parseArgs(args, VALUED);
  for (const name of options.keys()) if (![...VALUED, 'help', 'secondary'].includes(name)) throw new UsageError(`unknown option --${name}`);
  if (options.has('help')) return 'help';
  if (positional.length !== 1) throw new UsageError(positional.length === 0 ? 'give the record: RECORD.cfg or RECORD.cff' : 'give exactly one record');
  const str = (name: string): string | undefined => {
    const v = options.get(name);
    if (v === true) throw new UsageError(`option --${name} needs a value`);
    return v;
  };
  const format = str('format') ?? 'jsonl';
  if (format !== 'jsonl' && format !== 'csv') throw new UsageError(`--format must be jsonl or csv, found "${format}"`);
  const hz = str('nominal-hz');
  if (hz !== undefined && hz !== '50' && hz !== '60') throw new UsageError(`--nominal-hz must be 50 or 60, found "${hz}"`);
  const feeder = str('feeder') ?? null;
  if (feeder !== null && !FEEDER_ID_PATTERN.test(feeder)) throw new UsageError('--feeder must match [A-Za-z0-9_.-]{1,64}');
  const triple = (name: string): [ChannelRef, ChannelRef, ChannelRef] | undefined => {
    const v = str(name);
    if (v === undefined) return undefined;
    const parts = v.split(',').map((p) => p.trim());
    if (parts.length !== 3 || parts.some((p) => p === '')) throw new UsageError(`--${name} needs three channels for phases a, b, c, e.g. --${name} VA,VB,VC`);
    return parts as [string, string, string];
  };
  const positive = (name: string): number | undefined => {
    const v = str(name);
    if (v === undefined) return undefined;
    const x = Number(v);
    if (!Number.isFinite(x) || x <= 0) throw new UsageError(`--${name} must be a positive number, found "${v}"`);
    return x;
  };
  const off = str('utc-offset');
  let utcOffsetMinutes: number | undefined;
  if (off !== undefined) {
    utcOffsetMinutes = Number(off);
    if (!Number.isInteger(utcOffsetMinutes) || Math.abs(utcOffsetMinutes) > 14 * 60) throw new UsageError(`--utc-offset must be whole minutes within ±840, found "${off}"`);
  }
  const v = triple('voltage'), i = triple('current');
  return {
    file: positional[0]!,
    format,
    nominalHz: hz === undefined ? null : hz === '50' ? 50 : 60,
    feeder,
    override: { ...(v === undefined ? {} : { v }), ...(i === undefined ? {} : { i }) },
    nominalVoltage: positive('nominal-voltage') ?? null,
    faultPickupA: positive('fault-pickup') ?? DEFAULT_DETECTION.fault.pickupA,
    utcOffsetMinutes,
    side: options.has('secondary') ? 'secondary' : 'primary',
  };
}

export async function replayCommand(args: string[], io: { stdout: Writable; stderr: Writable }): Promise<number> {
  let opts: ReplayOptions;
  try {
    const parsed = parseReplayArgs(args);
    if (parsed === 'help') {
      await writeOut(io.stdout, `${REPLAY_USAGE}\n`);
      return EXIT_OK;
    }
    opts = parsed;
  } catch (e) {
    if (e instanceof UsageError) {
      await writeOut(io.stderr, `seqmon replay: ${e.message}\n${REPLAY_USAGE}\n`);
      return EXIT_USAGE;
    }
    throw e;
  }

  let record: ComtradeRecord;
  let channels: PhaseChannels;
  let nominalHz: 50 | 60;
  try {
    record = await readComtradeRecord(opts.file, opts.utcOffsetMinutes === undefined ? {} : { assumeUtcOffsetMinutes: opts.utcOffsetMinutes });
    requireFixedRate(record);
    channels = mapPhaseChannels(record.config, opts.override);
    const lf = record.config.lineFrequency;
    if (opts.nominalHz !== null) nominalHz = opts.nominalHz;
    else if (lf === 50 || lf === 60) nominalHz = lf;
    else throw new UsageError(`the record's line frequency is ${lf} Hz; give --nominal-hz 50 or 60`);
  } catch (e) {
    if (isAgentError(e) || e instanceof UsageError) {
      await writeOut(io.stderr, `seqmon replay: ${e.message}\n`);
      return EXIT_USAGE;
    }
    await writeOut(io.stderr, `seqmon replay: ${(e as Error).message}\n`);
    return EXIT_RUNTIME;
  }
  for (const w of [...record.config.warnings, ...record.data.warnings]) await writeOut(io.stderr, `warning: ${w}\n`);
  for (const n of channels.notes) await writeOut(io.stderr, `note: ${n}\n`);

  const feeder = opts.feeder ?? feederIdFrom(record.config.stationName);
  try {
    return await analyse(record, channels, nominalHz, feeder, opts, io);
  } catch (e) {
    if (isAgentError(e)) {
      await writeOut(io.stderr, `seqmon replay: ${e.message}\n`);
      return EXIT_USAGE;
    }
    await writeOut(io.stderr, `seqmon replay: ${(e as Error).message}\n`);
    return EXIT_RUNTIME;
  }
}

async function analyse(
  record: ComtradeRecord,
  channels: PhaseChannels,
  nominalHz: 50 | 60,
  feeder: string,
  opts: ReplayOptions,
  io: { stdout: Writable; stderr: Writable },
): Promise<number> {
  const v = channels.v === null ? null : channels.v.map((k) => scaledChannel(record, k, opts.side));
  const i = channels.i === null ? null : channels.i.map((k) => scaledChannel(record, k, opts.side));
  // A record has no live freshness to watch: stale-data stays off.
  const detection: DetectionSettings = { ...DEFAULT_DETECTION, staleData: { ...DEFAULT_DETECTION.staleData, enabled: false }, fault: { ...DEFAULT_DETECTION.fault, pickupA: opts.faultPickupA } };
  const detector = new FeederDetector(feeder, detection, { voltageLN: opts.nominalVoltage });
  const aggregator = new IntervalAggregator({ feeder, nominalHz });
  const det: DetectionOutput = createDetectionOutput();
  const aggregates: SequenceResult[] = [];
  const csv = opts.format === 'csv';
  let cycles = 0, alarms = 0, events = 0, gaps = 0;

  const writeDetections = async (): Promise<void> => {
    for (const a of aggregates) detector.onAggregate(a, det);
    aggregates.length = 0;
    for (const t of det.alarms) {
      alarms++;
      if (csv) await writeOut(io.stderr, `alarm: ${new Date(t.ts).toISOString()} ${t.condition} ${t.state} (${t.level}): ${t.message}\n`);
      else await writeOut(io.stdout, `${JSON.stringify({ output: 'alarm', ...alarmToWire(t) })}\n`);
    }
    for (const ev of det.events) {
      events++;
      if (csv) await writeOut(io.stderr, `event: ${new Date(ev.ts).toISOString()} ${ev.type}: ${ev.message}\n`);
      else await writeOut(io.stdout, `${JSON.stringify({ output: 'event', ...eventToWire(ev) })}\n`);
    }
    for (const d of det.diagnostics) await writeOut(io.stderr, `diagnostic: ${new Date(d.ts).toISOString()} ${d.kind}: ${d.message}\n`);
    det.alarms.length = 0;
    det.events.length = 0;
    det.diagnostics.length = 0;
  };

  if (csv) await writeOut(io.stdout, `${resultCsvHeader()}\n`);
  const scratch = new SequenceScratch();
  const vBuf = new Float64Array(6), iBuf = new Float64Array(6), vRms = new Float64Array(3);
  // IEC 61000-4-30 §4.7 flags need the declared voltage: dips, swells and interruptions are judged against it.
  const voltageEvents = opts.nominalVoltage === null ? null : new VoltageEventDetector(opts.nominalVoltage);
  const cycleMs = 1000 / nominalHz;
  let lastEnd = record.startEpochMs;

  for (const seg of record.segments) {
    const spc = seg.rate / nominalHz;
    if (spc < MIN_SAMPLES_PER_CYCLE) {
      await writeOut(io.stderr, `warning: samples ${seg.first + 1}..${seg.end} at ${seg.rate} samples/s are fewer than ${MIN_SAMPLES_PER_CYCLE} per cycle and were skipped\n`);
      continue;
    }
    const est = new CyclePhasorEstimator(seg.rate, nominalHz);
    let prevAngle: number | null = null;
    for (let k = 0; ; k++) {
      const pos = seg.first + est.marginBefore + k * spc;
      const span = est.span(pos);
      if (span.last >= seg.end) break;
      est.plan(pos);
      const whole = Math.floor(pos);
      const ts = record.startEpochMs + (record.timeSec[whole]! + (pos - whole) / seg.rate) * 1000;
      const vOk = v !== null && phasors(est, v, vBuf, vRms);
      const iOk = i !== null && phasors(est, i, iBuf, null);
      const missing = (v !== null && !vOk) || (i !== null && !iOk);
      if (missing) gaps++;
      let voltageEvent = false;
      if (voltageEvents !== null && vOk) {
        // One true-RMS value per cycle (IEC 61000-4-30 refreshes Urms(1/2) every half cycle; per cycle is the coarser form).
        voltageEvents.beginWindow();
        voltageEvents.step(vRms[0]!, vRms[1]!, vRms[2]!);
        voltageEvent = voltageEvents.dipSeen || voltageEvents.swellSeen || voltageEvents.interruptionSeen;
      }
      const vRes = vOk ? voltageFromPhasors(vBuf, scratch) : null;
      const iRes = iOk ? quantityFromPhasors(iBuf, scratch) : null;
      const ref = vRes?.pos ?? iRes?.pos ?? null;
      let freq: number | null = null;
      const angle = ref !== null && ref[0] > 0 ? ref[1] : null;
      if (angle !== null && prevAngle !== null) {
        const f = frequencyFromCycleAdvance(prevAngle, angle, nominalHz);
        freq = Math.abs(f - nominalHz) <= MAX_FREQ_DEVIATION_REL * nominalHz ? f : null;
      }
      prevAngle = angle;
      // Window 'frame' inside the core (its window names have no 'cycle'); written out as 'cycle'.
      const result: SequenceResult = { ts, feeder, window: 'frame', durationMs: cycleMs, freq, flagged: missing || voltageEvent, v: vRes, i: iRes, count: 1 };
      cycles++;
      if (csv) await writeOut(io.stdout, `${resultCsvRow({ ...result, window: 'cycle' })}\n`);
      else await writeOut(io.stdout, `${JSON.stringify({ ...resultToWire(result), window: 'cycle' })}\n`);
      detector.onValue(result, det);
      aggregator.push(result, (a) => aggregates.push(a));
      lastEnd = ts + cycleMs;
      await writeDetections();
    }
  }
  // End of record: close the open aggregation intervals and let a disturbance still ending run out its dropout.
  aggregator.flush((a) => aggregates.push(a));
  detector.onTick(lastEnd + FAULT_DROPOUT_MS, det);
  await writeDetections();
  if (cycles === 0) {
    await writeOut(io.stderr, `seqmon replay: the record holds no complete cycle at ${nominalHz} Hz with at least ${MIN_SAMPLES_PER_CYCLE} samples per cycle; nothing to analyse\n`);
    return EXIT_USAGE;
  }
  await writeOut(io.stderr, `seqmon replay: ${cycles} cycle(s)${gaps > 0 ? ` (${gaps} with missing samples, flagged)` : ''}, ${alarms} alarm transition(s), ${events} disturbance event(s)\n`);
  return EXIT_OK;
}

/** One-cycle phasors (and optionally true RMS) of three channels; false when a sample in the window is missing (NaN). */
function phasors(est: CyclePhasorEstimator, ch: Float64Array[], buf: Float64Array, rms: Float64Array | null): boolean {
  for (let p = 0; p < 3; p++) {
    est.estimateInto(ch[p]!, buf, 2 * p);
    if (rms !== null) rms[p] = est.lastRms;
  }
  for (let k = 0; k < 6; k++) if (!Number.isFinite(buf[k]!)) return false;
  return true;
}
