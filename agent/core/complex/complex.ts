/**
 * Complex numbers as plain (re, im) pairs. Phasors travel through the core in
 * rectangular form inside Float64Arrays, interleaved [re0, im0, re1, im1, ...],
 * so the hot path allocates nothing. Polar <-> rectangular conversion happens
 * once at the frame boundary and once when a result is written out.
 */

export const DEG = Math.PI / 180;
export const RAD = 180 / Math.PI;

/** Writes magnitude∠angleDeg into out[offset], out[offset+1]. */
export function polarToRectInto(magnitude: number, angleDeg: number, out: Float64Array, offset: number): void {
  const th = angleDeg * DEG;
  out[offset] = magnitude * Math.cos(th);
  out[offset + 1] = magnitude * Math.sin(th);
}

export function magnitudeAt(buf: Float64Array, offset: number): number {
  // Not Math.hypot: several times slower in V8, and no phasor comes near overflow.
  const re = buf[offset]!, im = buf[offset + 1]!;
  return Math.sqrt(re * re + im * im);
}

/** Angle in degrees, normalised to (-180, 180]. */
export function angleDegAt(buf: Float64Array, offset: number): number {
  return normalizeDeg(Math.atan2(buf[offset + 1]!, buf[offset]!) * RAD);
}

/** Normalises an angle in degrees to the half-open range (-180, 180]. */
export function normalizeDeg(deg: number): number {
  let d = deg % 360;
  if (d <= -180) d += 360;
  else if (d > 180) d -= 360;
  return d;
}

/** Smallest signed difference a - b in degrees, in (-180, 180]. */
export function angleDiffDeg(a: number, b: number): number {
  return normalizeDeg(a - b);
}
