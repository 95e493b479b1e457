/**
 * Exponential back-off with "equal jitter" for reconnect attempts: the n-th
 * delay is drawn from [cap/2, cap] with cap = min(maxMs, minMs * 2^n).
 *
 * Why this shape: a fixed period hammers a broker that is restarting and makes
 * every agent of a substation reconnect in lock-step; doubling spreads the
 * load and the random half decorrelates agents that lost the broker at the
 * same moment, while the lower bound of cap/2 keeps the delays growing (AWS
 * Architecture Blog, "Exponential Backoff And Jitter", 2015; common practice).
 * Pure: the caller owns the timers; shared by every adapter that reconnects.
 */
export interface BackoffSettings {
  /** Delay cap of the first attempt, ms (> 0). */
  readonly minMs: number;
  /** Largest delay ever returned, ms (>= minMs). */
  readonly maxMs: number;
}

export class ExponentialBackoff {
  private exponent = 0;
  private count = 0;

  constructor(
    private readonly settings: BackoffSettings,
    /** Uniform random in [0, 1); adapters pass Math.random, tests pin the jitter. */
    private readonly random: () => number,
  ) {}

  /** Delay before the next attempt, ms; each call moves one attempt on. */
  next(): number {
    const { minMs, maxMs } = this.settings;
    // The exponent stops growing once the cap is reached, so 2^n never overflows.
    const cap = Math.min(maxMs, minMs * 2 ** this.exponent);
    if (cap < maxMs) this.exponent++;
    this.count++;
    const half = cap / 2;
    return Math.round(half + this.random() * half);
  }

  /** Attempts made since the last reset. */
  attempts(): number {
    return this.count;
  }

  /** Back to the first delay, after a connection that stayed up. */
  reset(): void {
    this.exponent = 0;
    this.count = 0;
  }
}
