/**
 * Basic-window estimator for sampled three-phase waveforms, after the
 * IEC 61000-4-30 class A measurement method:
 *  - basic window = 10 cycles at 50 Hz, 12 cycles at 60 Hz, of the ACTUAL
 *    frequency (§4.4), windows contiguous and non-overlapping;
 *  - the frequency is tracked window by window (frequency-tracker.ts) until
 *    the window holds exactly N cycles;
 *  - input fast enough to carry content that would alias onto harmonics
 *    2..MAX_HARMONIC on that grid is low-pass filtered first (anti-alias.ts,
 *    centred, so without delay), and the filter's output is kept only at
 *    every D-th sample, D the largest integer leaving at least
 *    DECIMATED_MIN_RATIO × the stopband edge: the filter's length grows with
 *    the rate, so computing every output made very fast input (200 kS/s and
 *    up) cost more than real time. True RMS and the half-cycle RMS use the
 *    raw samples;
 *  - the window is resampled (six-point Lagrange) to M = N·POINTS_PER_CYCLE
 *    points, so the fundamental falls exactly on DFT bin N and harmonic h on
 *    bin h·N: fundamental phasors free of leakage (§5.7.2, unbalance from the
 *    fundamental symmetrical components) and harmonic magnitudes for THD.
 *    Only the bins h·N are needed, and for those the M-point DFT equals the
 *    POINTS_PER_CYCLE-point DFT of the N cycles summed point by point
 *    ("folded"): X_M[h·N] = Σ_p (Σ_c x[c·P + p])·e^{-j2πhp/P}, because
 *    e^{-j2πh·c} = 1. So one small power-of-two FFT per pair of channels
 *    replaces an M-point one, with identical values;
 *  - true RMS from the raw samples over the window (§5.2);
 *  - Urms(1/2) per voltage channel, one cycle refreshed every half cycle
 *    (§5.4.1), for the dip, swell and interruption flags (§5.4, §4.7). The
 *    standard starts these cycles at a zero crossing of the fundamental; here
 *    they start at the window start, which leaves the one-cycle RMS of a
 *    steady wave unchanged and moves event edges by less than half a cycle.
 *
 * Phasor reference: each phasor is RMS, rectangular, with its angle relative
 * to a cosine at the window's frequency that peaks at the window's first
 * instant (`ts`). For a steady sinusoid this is the signal's phase at `ts`.
 * Because N is even, it is also the signal's phase at the window centre; under
 * a frequency ramp that is the phase the estimate follows.
 *
 * Input arrives in blocks of any size; samples are carried between blocks in
 * one buffer per channel. After warm-up (first block at a given rate) nothing
 * is allocated per window.
 */
import { AgentError } from '../errors.js';
import type { SamplesFrame } from '../frames.js';
import { antiAliasBands, CentredFir, kaiserLowPass } from './anti-alias.js';
import { Fft } from './fft.js';
import { coarseFrequencyHz, HalfWindowRefiner } from './frequency-tracker.js';
import { LAGRANGE_TAPS_AFTER, LAGRANGE_TAPS_BEFORE, LagrangeResampler } from './lagrange-resampler.js';
import { sumSquaresBetween } from './sum-squares.js';
import { VoltageEventDetector } from './voltage-events.js';

export interface BasicWindow {
  /** Epoch ms of the window's first instant (may fall between samples). */
  ts: number;
  durationMs: number;
  /** Frequency over the window, Hz: N cycles / duration. */
  freq: number;
  /** Fundamental phasors a, b, c: RMS, rectangular interleaved [aRe, aIm, bRe, bIm, cRe, cIm]. */
  v: Float64Array | null;
  i: Float64Array | null;
  /** True RMS including harmonics, per phase [a, b, c]. */
  vRms: Float64Array | null;
  iRms: Float64Array | null;
  /** THD in percent of the fundamental, per phase, harmonics 2..MAX_HARMONIC (fewer when the sample rate cannot carry them); NaN when the fundamental is zero. */
  vThd: Float64Array | null;
  iThd: Float64Array | null;
  /** IEC 61000-4-30 §4.7: dip, swell, interruption or gap. */
  flagged: boolean;
  /** The data before this window were discontinuous (timestamp jump, rate or channel change). */
  gap: boolean;
  dip: boolean;
  swell: boolean;
  interruption: boolean;
}

export interface WaveformEstimatorOptions {
  nominalHz: 50 | 60;
  /** Declared line-to-neutral voltage Udin for the dip/swell/interruption flags; null disables them. */
  nominalVoltageLN: number | null;
}

/**
 * Resampled points per cycle: a power of two (the FFT size after folding),
 * with the 40th harmonic below its Nyquist limit (64), and no coarser than
 * common recorder rates (128 samples per cycle is 7680 S/s at 60 Hz).
 */
export const POINTS_PER_CYCLE = 128;
/** Highest harmonic in THD (IEC 61000-4-7 groups up to the 40th; IEC 61000-4-30 §5.9 uses 2..40 at least). */
export const MAX_HARMONIC = 40;
/**
 * Frequency tracking is clamped to ±20 % of nominal: wider than the class A
 * measuring range (42.5–57.5 Hz, 51–69 Hz; IEC 61000-4-30 §5.1) so the edges
 * are measured, narrow enough to bound the carry buffer.
 */
export const TRACKING_RANGE = 0.2;
/**
 * The filtered stream is kept at no less than this many times the filter's stopband edge: at 4 × 3520 Hz
 * (50 Hz system) that is 14 kS/s, about the 256 samples per cycle the estimator is tested at unfiltered and
 * filtered alike, so the interpolation after it is as accurate as at those rates.
 */
export const DECIMATED_MIN_RATIO = 4;
/** Iteration stops when the correction is below this, Hz (a hundredth of the 5 mHz IEEE C37.118.1 FE limit). */
export const FREQUENCY_TOLERANCE_HZ = 5e-5;
export const MAX_ITERATIONS = 8;
/**
 * Lock test: share of the primary channels' energy at the fundamental bin of
 * the half windows. A sinusoid at the tracked frequency gives 1, a distorted
 * wave 1/(1 + THD²) (0.92 at 30 % THD); a trial frequency that is an alias (e.g. 47.5 Hz for a 57 Hz
 * signal, 10-cycle window: 5 trial cycles hold 6 true ones, so both halves
 * agree in phase) gives almost 0, as does noise. Below one half the
 * frequency is acquired again from zero crossings.
 */
export const MIN_FUNDAMENTAL_FRACTION = 0.5;

const V = 0;
const I = 3;

export class WaveformEstimator {
  private readonly nominalHz: 50 | 60;
  private readonly cycles: number;
  private readonly minHz: number;
  private readonly maxHz: number;
  private readonly events: VoltageEventDetector | null;
  private readonly fft = new Fft(POINTS_PER_CYCLE);
  /** Resampled points per window, N·POINTS_PER_CYCLE. */
  private readonly points: number;
  private readonly refiner: HalfWindowRefiner;
  private readonly resampler: LagrangeResampler;
  private readonly resampled: Float64Array[] = [];
  private readonly out: BasicWindow;
  private readonly vPh = new Float64Array(6);
  private readonly iPh = new Float64Array(6);
  private readonly vRms = new Float64Array(3);
  private readonly iRms = new Float64Array(3);
  private readonly vThd = new Float64Array(3);
  private readonly iThd = new Float64Array(3);
  private readonly harmonicSq = new Float64Array(6);
  private readonly fundamental = new Float64Array(12);
  private readonly halfSq = new Float64Array(3);
  private readonly prevHalfSq = new Float64Array(3);
  private readonly meanSq = new Float64Array(6);

  // Stream state, set by restart().
  private rate = 0;
  private hasV = false;
  private hasI = false;
  private buffers: Float64Array[] = [];
  /** Anti-alias filter for this rate, or null when the rate needs none; `filtered` holds its output, aligned with `buffers`. */
  private filter: CentredFir | null = null;
  private filtered: Float64Array[] = [];
  /** Half the filter length: samples the filter needs on each side (0 without a filter). */
  private half = 0;
  /** Raw samples per filtered sample: filtered[c][j] is the filter's output at raw index j·decimation. */
  private decimation = 1;
  /** Next filtered index not computed yet. */
  private frontier = 0;
  private capacity = 0;
  /** Valid samples in each buffer. */
  private length = 0;
  /** Fractional buffer position of the next window's first instant. */
  private start = 0;
  /** Samples dropped from the buffers' front since streamTs. */
  private dropped = 0;
  /** Epoch ms of the first sample since the last restart. */
  private streamTs = Number.NaN;
  /** Samples received since the last restart. */
  private received = 0;
  private freq: number;
  private locked = false;
  private prevHalfValid = false;
  private gapPending = false;

  constructor(opts: WaveformEstimatorOptions) {
    this.nominalHz = opts.nominalHz;
    // IEC 61000-4-30 §4.4: 10 cycles in 50 Hz systems, 12 cycles in 60 Hz systems.
    this.cycles = opts.nominalHz === 50 ? 10 : 12;
    this.minHz = opts.nominalHz * (1 - TRACKING_RANGE);
    this.maxHz = opts.nominalHz * (1 + TRACKING_RANGE);
    this.freq = opts.nominalHz;
    this.events = opts.nominalVoltageLN !== null && opts.nominalVoltageLN > 0 ? new VoltageEventDetector(opts.nominalVoltageLN) : null;
    this.points = this.cycles * POINTS_PER_CYCLE;
    this.resampler = new LagrangeResampler(this.points);
    this.refiner = new HalfWindowRefiner(this.points, this.cycles);
    for (let c = 0; c < 6; c++) this.resampled.push(new Float64Array(this.points));
    this.out = {
      ts: 0, durationMs: 0, freq: 0, v: null, i: null, vRms: null, iRms: null, vThd: null, iThd: null,
      flagged: false, gap: false, dip: false, swell: false, interruption: false,
    };
  }

  /**
   * Appends a block of samples and calls `emit` once per completed basic
   * window. The emitted object and its arrays are reused: they are valid only
   * during the callback; copy what you keep.
   */
  push(frame: SamplesFrame, emit: (w: BasicWindow) => void): void {
    const hasV = frame.v !== null, hasI = frame.i !== null;
    if ((!hasV && !hasI) || frame.length === 0) return;
    const period = 1000 / frame.rate;
    if (frame.rate !== this.rate || hasV !== this.hasV || hasI !== this.hasI) {
      this.restart(frame, this.rate !== 0);
    } else if (Math.abs(frame.ts - (this.streamTs + this.received * period)) > 0.5 * period) {
      // Not continuing the previous block within half a sample: a gap (or overlap).
      this.restart(frame, true);
    }
    this.received += frame.length;
    let offset = 0;
    while (offset < frame.length) {
      if (this.capacity - this.length < frame.length - offset) this.compact();
      const n = Math.min(frame.length - offset, this.capacity - this.length);
      // Cannot happen while the capacity exceeds the longest window plus taps; refuse rather than spin.
      if (n === 0) throw new AgentError('INTERNAL', `basic-window buffer of ${this.capacity} samples is full at ${this.rate} samples/s with no window to take out`);
      // Plain copy loops: subarray() views would allocate an object per channel and block.
      if (frame.v !== null) for (let c = 0; c < 3; c++) copyInto(frame.v[c]!, offset, n, this.buffers[V + c]!, this.length);
      if (frame.i !== null) for (let c = 0; c < 3; c++) copyInto(frame.i[c]!, offset, n, this.buffers[I + c]!, this.length);
      this.length += n;
      offset += n;
      this.filterNew();
      while (this.nextWindow(emit)) {
        // one window per iteration
      }
    }
  }

  /** Forgets the stream: the next block starts a new alignment without a gap flag. */
  reset(): void {
    this.rate = 0;
    this.hasV = false;
    this.hasI = false;
    this.length = 0;
    this.received = 0;
    this.streamTs = Number.NaN;
    this.locked = false;
    this.prevHalfValid = false;
    this.gapPending = false;
    this.freq = this.nominalHz;
    this.events?.reset();
  }

  private restart(frame: SamplesFrame, gap: boolean): void {
    const hasV = frame.v !== null, hasI = frame.i !== null;
    if (frame.rate !== this.rate) {
      const bands = antiAliasBands(frame.rate, POINTS_PER_CYCLE, MAX_HARMONIC, this.minHz, this.maxHz);
      this.filter = bands === null ? null : new CentredFir(kaiserLowPass(frame.rate, bands));
      this.half = this.filter?.half ?? 0;
      this.decimation = bands === null ? 1 : Math.max(1, Math.floor(frame.rate / (DECIMATED_MIN_RATIO * bands.stopHz)));
      // The buffer holds the longest window (lowest tracked frequency) plus taps and the filter's reach, plus as much again for incoming blocks.
      const longest = Math.ceil((this.cycles * frame.rate) / this.minHz);
      this.capacity = 2 * longest + 4 * (LAGRANGE_TAPS_BEFORE + LAGRANGE_TAPS_AFTER + this.half) + 16;
      this.buffers = [];
      this.filtered = [];
      for (let c = 0; c < 6; c++) {
        this.buffers.push(new Float64Array(this.capacity));
        if (this.filter !== null) this.filtered.push(new Float64Array(this.capacity));
      }
    }
    this.rate = frame.rate;
    this.hasV = hasV;
    this.hasI = hasI;
    if (!hasV) for (let c = 0; c < 3; c++) this.buffers[V + c]!.fill(0);
    if (!hasI) for (let c = 0; c < 3; c++) this.buffers[I + c]!.fill(0);
    if (this.filter !== null) for (let c = 0; c < 6; c++) this.filtered[c]!.fill(0);
    this.length = 0;
    // The first window starts after the interpolation taps it needs before it, and after the filter's reach.
    const D = this.decimation;
    this.frontier = Math.ceil(this.half / D);
    this.start = this.filter === null ? LAGRANGE_TAPS_BEFORE : D * (LAGRANGE_TAPS_BEFORE + this.frontier);
    this.dropped = 0;
    this.streamTs = frame.ts;
    this.received = 0;
    this.locked = false;
    this.prevHalfValid = false;
    this.gapPending = gap;
    this.events?.reset();
  }

  /**
   * Drops samples no longer needed: keeps the taps before the next window, and with the filter the raw
   * samples it still needs; drops a whole number of filtered samples, so the two stay aligned.
   */
  private compact(): void {
    let drop = Math.floor(this.start) - LAGRANGE_TAPS_BEFORE;
    let dropFiltered = 0;
    if (this.filter !== null) {
      const D = this.decimation;
      dropFiltered = Math.min(Math.floor(drop / D), Math.floor(this.start / D) - LAGRANGE_TAPS_BEFORE, Math.floor((this.frontier * D - this.half) / D));
      drop = dropFiltered * D;
    }
    if (drop <= 0) return;
    for (let c = 0; c < 6; c++) {
      this.buffers[c]!.copyWithin(0, drop, this.length);
      if (this.filter !== null) this.filtered[c]!.copyWithin(0, dropFiltered, this.frontier);
    }
    this.length -= drop;
    this.start -= drop;
    this.dropped += drop;
    this.frontier -= dropFiltered;
  }

  /** Filters at the (decimated) positions whose neighbourhood has now fully arrived. */
  private filterNew(): void {
    const filter = this.filter;
    if (filter === null) return;
    const to = Math.floor((this.length - 1 - this.half) / this.decimation) + 1;
    if (to <= this.frontier) return;
    for (let c = 0; c < 6; c++) if (this.present(c)) filter.apply(this.buffers[c]!, this.filtered[c]!, this.frontier, to, this.decimation);
    this.frontier = to;
  }

  /** Plans the resampling of N cycles of `span` raw samples from the window start (on the filtered samples when filtering). */
  private plan(span: number): void {
    const D = this.filter === null ? 1 : this.decimation;
    this.resampler.plan(this.start / D, span / (this.points * D), this.points);
  }

  /** What the resampler reads for channel c: the filtered samples when the rate needs the filter. */
  private source(c: number): Float64Array {
    return this.filter === null ? this.buffers[c]! : this.filtered[c]!;
  }

  /** Samples the window [start, start + span) needs in the buffer (filtered, when filtering). */
  private fits(span: number): boolean {
    if (this.filter === null) return Math.floor(this.start + span) + LAGRANGE_TAPS_AFTER + 1 <= this.length;
    return Math.floor((this.start + span) / this.decimation) + LAGRANGE_TAPS_AFTER + 1 <= this.frontier && Math.ceil(this.start + span) <= this.length;
  }

  private nextWindow(emit: (w: BasicWindow) => void): boolean {
    const rate = this.rate, N = this.cycles, M = this.points;
    let f = this.freq;
    let acquired = false;
    if (!this.locked) {
      const c = this.acquire();
      if (Number.isNaN(c)) return false;
      f = c;
      acquired = true;
    }
    // Refine with the three phases of the primary set (voltages if present), falling back to currents.
    const primary = this.hasV ? V : I;
    const secondary = this.hasV && this.hasI ? I : -1;
    let set = primary;
    // Bit c set: channel c is already resampled on the span of the current f.
    let done = 0;
    let fraction = 0;
    for (let iter = 0; iter < MAX_ITERATIONS; iter++) {
      if (!this.fits((N * rate) / f)) return false;
      done = this.resampleSet(set, f, 0);
      const refiner = this.refiner;
      refiner.update(this.resampled[set]!, this.resampled[set + 1]!, this.resampled[set + 2]!);
      if (!Number.isFinite(refiner.correction) && set === primary && secondary >= 0) {
        set = secondary;
        done = this.resampleSet(set, f, done);
        refiner.update(this.resampled[set]!, this.resampled[set + 1]!, this.resampled[set + 2]!);
      }
      const rel = refiner.correction;
      fraction = refiner.fundamentalFraction;
      if (fraction < MIN_FUNDAMENTAL_FRACTION && !acquired) {
        // Lock lost: a frequency step beyond the refiner's ±f/N range, or the signal back after an outage. Acquire again.
        const c = this.acquire();
        if (Number.isNaN(c)) return false;
        f = c;
        acquired = true;
        set = primary;
        continue;
      }
      if (!Number.isFinite(rel)) break; // no usable phase information: hold the frequency
      const next = this.clamp(f * (1 + rel));
      if (Math.abs(next - f) < FREQUENCY_TOLERANCE_HZ) break;
      f = next;
      done = 0;
    }
    const locked = fraction >= MIN_FUNDAMENTAL_FRACTION;
    if (!locked && f !== this.freq) {
      // No fundamental to follow (noise only, or a waveform far from a sinusoid): hold the last good frequency.
      f = this.freq;
      done = 0;
    }
    const span = (N * rate) / f;
    if (!this.fits(span)) return false;
    if (done === 0) this.plan(span);
    for (let c = 0; c < 6; c++) if (this.present(c) && (done & (1 << c)) === 0) this.resampler.apply(this.source(c), this.resampled[c]!);
    this.spectrum(f);
    this.rawRms(span);

    const w = this.out;
    w.ts = this.streamTs + ((this.dropped + this.start) * 1000) / rate;
    w.durationMs = (span * 1000) / rate;
    w.freq = f;
    w.v = this.hasV ? this.vPh : null;
    w.i = this.hasI ? this.iPh : null;
    w.vRms = this.hasV ? this.vRms : null;
    w.iRms = this.hasI ? this.iRms : null;
    w.vThd = this.hasV ? this.vThd : null;
    w.iThd = this.hasI ? this.iThd : null;
    w.gap = this.gapPending;
    const ev = this.events;
    w.dip = ev !== null && this.hasV && ev.dipSeen;
    w.swell = ev !== null && this.hasV && ev.swellSeen;
    w.interruption = ev !== null && this.hasV && ev.interruptionSeen;
    w.flagged = w.gap || w.dip || w.swell || w.interruption;

    this.start += span;
    this.freq = f;
    this.locked = locked;
    this.gapPending = false;
    emit(w);
    return true;
  }

  /**
   * Coarse frequency from zero crossings over one nominal window from the
   * window start (always the same span, so the result does not depend on how
   * the samples were split into blocks). NaN while those samples have not all
   * arrived; the nominal frequency when no crossings are found.
   */
  private acquire(): number {
    const nominalSpan = (this.cycles * this.rate) / this.nominalHz;
    if (!this.fits(nominalSpan)) return Number.NaN;
    const from = Math.floor(this.start);
    const to = from + Math.floor(nominalSpan);
    const coarse = coarseFrequencyHz(this.buffers[this.strongestChannel(from, to)]!, from, to, this.rate);
    return Number.isFinite(coarse) ? this.clamp(coarse) : this.nominalHz;
  }

  private present(c: number): boolean {
    return c < 3 ? this.hasV : this.hasI;
  }

  private clamp(f: number): number {
    return f < this.minHz ? this.minHz : f > this.maxHz ? this.maxHz : f;
  }

  /** Resamples channels set..set+2 onto the span of N cycles at f; returns the updated done-mask. */
  private resampleSet(set: number, f: number, done: number): number {
    const span = (this.cycles * this.rate) / f;
    if (done === 0) this.plan(span);
    for (let c = set; c < set + 3; c++) this.resampler.apply(this.source(c), this.resampled[c]!);
    return done | (7 << set);
  }

  private strongestChannel(from: number, to: number): number {
    let best = this.hasV ? V : I, bestSq = -1;
    for (let c = 0; c < 6; c++) {
      if (!this.present(c)) continue;
      const sq = sumSquaresBetween(this.buffers[c]!, from, to - 1);
      if (sq > bestSq) {
        bestSq = sq;
        best = c;
      }
    }
    return best;
  }

  /**
   * Fundamental phasors and THD from one folded POINTS_PER_CYCLE-point FFT
   * per pair of channels: two real signals x, y packed as z = x + j·y give
   * X[k] = (Z[k] + Z*[P-k])/2 and Y[k] = (Z[k] - Z*[P-k])/(2j) (Oppenheim &
   * Schafer, Discrete-Time Signal Processing, DFT of two real sequences; from
   * memory). Bin h of the folded FFT is bin h·N of the whole window.
   */
  private spectrum(f: number): void {
    const P = POINTS_PER_CYCLE, N = this.cycles;
    // Harmonics must lie below the raw Nyquist frequency, or they are interpolation images.
    const hMax = Math.min(MAX_HARMONIC, P / 2 - 1, Math.ceil(this.rate / (2 * f)) - 1);
    const zin = this.fft.input, z = this.fft.output;
    const fund = this.fundamental, hsq = this.harmonicSq;
    // Channel pairs: (0,1), (2,3), (4,5); absent channels are zero-filled.
    for (let p = 0; p < 3; p++) {
      const cx = 2 * p, cy = 2 * p + 1;
      const px = this.present(cx), py = this.present(cy);
      if (!px && !py) continue;
      const x = this.resampled[cx]!, y = this.resampled[cy]!;
      // Fold the N cycles onto one (see the module comment).
      for (let k = 0; k < P; k++) {
        let sx = 0, sy = 0;
        for (let c = 0, j = k; c < N; c++, j += P) {
          sx += x[j]!;
          sy += y[j]!;
        }
        zin[2 * k] = px ? sx : 0;
        zin[2 * k + 1] = py ? sy : 0;
      }
      this.fft.forward();
      hsq[cx] = 0;
      hsq[cy] = 0;
      for (let h = 1; h <= hMax; h++) {
        const mh = P - h;
        const zr = z[2 * h]!, zi = z[2 * h + 1]!, wr = z[2 * mh]!, wi = z[2 * mh + 1]!;
        const xr = 0.5 * (zr + wr), xi = 0.5 * (zi - wi);
        const yr = 0.5 * (zi + wi), yi = -0.5 * (zr - wr);
        if (h === 1) {
          fund[2 * cx] = xr;
          fund[2 * cx + 1] = xi;
          fund[2 * cy] = yr;
          fund[2 * cy + 1] = yi;
        } else {
          hsq[cx] += xr * xr + xi * xi;
          hsq[cy] += yr * yr + yi * yi;
        }
      }
    }
    const M = this.points;
    // A cosine of peak A gives X[N] = A·M/2; the RMS phasor is X[N]·√2/M.
    const scale = Math.SQRT2 / M;
    for (let c = 0; c < 3; c++) {
      if (this.hasV) {
        this.vPh[2 * c] = fund[2 * c]! * scale;
        this.vPh[2 * c + 1] = fund[2 * c + 1]! * scale;
        this.vThd[c] = thdPercent(hsq[c]!, fund[2 * c]!, fund[2 * c + 1]!);
      }
      if (this.hasI) {
        this.iPh[2 * c] = fund[2 * (I + c)]! * scale;
        this.iPh[2 * c + 1] = fund[2 * (I + c) + 1]! * scale;
        this.iThd[c] = thdPercent(hsq[I + c]!, fund[2 * (I + c)]!, fund[2 * (I + c) + 1]!);
      }
    }
  }

  /** True RMS per channel over the window, and Urms(1/2) through the event detector. */
  private rawRms(span: number): void {
    const N = this.cycles;
    const half = span / (2 * N);
    const cycle = 2 * half;
    const ms = this.meanSq;
    for (let c = 0; c < 6; c++) ms[c] = 0;
    const ev = this.events;
    if (ev !== null && this.hasV) ev.beginWindow();
    for (let k = 0; k < 2 * N; k++) {
      const a = this.start + k * half, b = this.start + (k + 1) * half;
      for (let c = 0; c < 6; c++) {
        if (!this.present(c)) continue;
        const sq = sumSquaresBetween(this.buffers[c]!, a, b);
        ms[c] += sq;
        if (c < 3) this.halfSq[c] = sq;
      }
      if (ev !== null && this.hasV) {
        if (this.prevHalfValid) {
          const p = this.prevHalfSq, h = this.halfSq;
          ev.step(Math.sqrt((p[0]! + h[0]!) / cycle), Math.sqrt((p[1]! + h[1]!) / cycle), Math.sqrt((p[2]! + h[2]!) / cycle));
        }
        this.prevHalfSq.set(this.halfSq);
        this.prevHalfValid = true;
      }
    }
    for (let c = 0; c < 3; c++) {
      if (this.hasV) this.vRms[c] = Math.sqrt(ms[c]! / span);
      if (this.hasI) this.iRms[c] = Math.sqrt(ms[I + c]! / span);
    }
  }
}

function copyInto(src: Float64Array, from: number, count: number, dst: Float64Array, at: number): void {
  for (let k = 0; k < count; k++) dst[at + k] = src[from + k]!;
}

function thdPercent(harmonicSq: number, re: number, im: number): number {
  const f2 = re * re + im * im;
  return f2 > 0 ? (100 * Math.sqrt(harmonicSq)) / Math.sqrt(f2) : Number.NaN;
}
