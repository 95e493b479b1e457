/**
 * Per-client token buckets for the request rate limit: each client may burst
 * up to `perMinute` requests and then refills at perMinute/60 000 per ms.
 * The table is bounded; when full, the bucket untouched longest is evicted
 * (Map keeps insertion order, and every use re-inserts).
 */
export const MAX_TRACKED_CLIENTS = 10_000;

interface Bucket {
  tokens: number;
  at: number;
}

export class TokenBuckets {
  private readonly buckets = new Map<string, Bucket>();
  private readonly refillPerMs: number;

  constructor(
    private readonly perMinute: number,
    private readonly now: () => number,
    private readonly maxClients = MAX_TRACKED_CLIENTS,
  ) {
    this.refillPerMs = perMinute / 60_000;
  }

  /** Takes one token for `key`; returns 0 when allowed, else the ms until a token is available. */
  take(key: string): number {
    const now = this.now();
    let b = this.buckets.get(key);
    if (b === undefined) {
      b = { tokens: this.perMinute, at: now };
      if (this.buckets.size >= this.maxClients) {
        const oldest = this.buckets.keys().next().value;
        if (oldest !== undefined) this.buckets.delete(oldest);
      }
    } else {
      this.buckets.delete(key);
      b.tokens = Math.min(this.perMinute, b.tokens + Math.max(0, now - b.at) * this.refillPerMs);
      b.at = now;
    }
    this.buckets.set(key, b);
    if (b.tokens >= 1) {
      b.tokens -= 1;
      return 0;
    }
    return Math.ceil((1 - b.tokens) / this.refillPerMs);
  }

  get size(): number {
    return this.buckets.size;
  }
}
