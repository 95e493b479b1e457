/**
 * Typed facade over fft.js (radix-4, power-of-two sizes). One instance per
 * size; it owns its input/output buffers so a caller on the hot path never
 * allocates. Only Float64Arrays are passed to fft.js: mixing plain arrays and
 * typed arrays makes its inner loops polymorphic and about twice as slow.
 *
 * Layout: complex data are interleaved [re0, im0, re1, im1, ...], length 2·size.
 * Conventions (those of fft.js): forward X[k] = Σ x[n]·e^{-j2πkn/N} (no
 * scaling); inverse includes the 1/N factor, so inverse(forward(x)) = x.
 */
import FFTJS from 'fft.js';

/** The part of the fft.js instance API used here, with real types. */
interface FftJsInstance {
  readonly size: number;
  transform(out: Float64Array, data: Float64Array): void;
  inverseTransform(out: Float64Array, data: Float64Array): void;
  realTransform(out: Float64Array, data: Float64Array): void;
  completeSpectrum(spectrum: Float64Array): void;
}
type FftJsConstructor = new (size: number) => FftJsInstance;

// fft.js ships an `any`-typed declaration; narrow it once here so no `any` reaches the core.
const FftJs = FFTJS as unknown as FftJsConstructor;

export class Fft {
  readonly size: number;
  /** Complex input scratch, interleaved, length 2·size. */
  readonly input: Float64Array;
  /** Complex output scratch, interleaved, length 2·size. */
  readonly output: Float64Array;
  private readonly impl: FftJsInstance;

  constructor(size: number) {
    if (!Number.isInteger(size) || size < 2 || (size & (size - 1)) !== 0) {
      throw new RangeError(`FFT size must be a power of two of at least 2, got ${size}`);
    }
    this.size = size;
    this.impl = new FftJs(size);
    this.input = new Float64Array(2 * size);
    this.output = new Float64Array(2 * size);
  }

  /** Forward transform of this.input into this.output. */
  forward(): Float64Array {
    this.impl.transform(this.output, this.input);
    return this.output;
  }

  /** Forward transform of a caller-owned interleaved buffer into another (they must differ). */
  forwardInto(input: Float64Array, output: Float64Array): void {
    this.check(input, output);
    this.impl.transform(output, input);
  }

  /** Inverse transform (scaled by 1/size) of a caller-owned buffer into another (they must differ). */
  inverseInto(input: Float64Array, output: Float64Array): void {
    this.check(input, output);
    this.impl.inverseTransform(output, input);
  }

  /**
   * Spectrum of a real signal (length `size`) into an interleaved buffer of
   * length 2·size; the upper half is filled from conjugate symmetry.
   */
  realForwardInto(input: Float64Array, output: Float64Array): void {
    if (input.length !== this.size || output.length !== 2 * this.size || input.buffer === output.buffer) {
      throw new RangeError(`real FFT of size ${this.size} needs a real input of ${this.size} and a separate output of ${2 * this.size} values`);
    }
    this.impl.realTransform(output, input);
    this.impl.completeSpectrum(output);
  }

  private check(input: Float64Array, output: Float64Array): void {
    const n = 2 * this.size;
    if (input.length !== n || output.length !== n || input.buffer === output.buffer) {
      throw new RangeError(`FFT of size ${this.size} needs separate interleaved input and output buffers of ${n} values`);
    }
  }
}
