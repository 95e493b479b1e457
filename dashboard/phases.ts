/**
 * Phase phasors from the sequence components of a result: the inverse
 * Fortescue transform Xa = X0+X1+X2, Xb = X0+a²X1+aX2, Xc = X0+aX1+a²X2,
 * a = 1∠120° (shared/ARCHITECTURE.md conventions; Glover, Sarma & Overbye ch. 8).
 * When angles were not measured, only the RMS magnitudes are known.
 */
import type { Polar, QuantityWire } from './api.js';
import type { PhasorSet } from './phasor-diagram.js';

function rect(p: [number, number]): [number, number] {
  const th = (p[1] * Math.PI) / 180;
  return [p[0] * Math.cos(th), p[0] * Math.sin(th)];
}

function rotate([re, im]: [number, number], degrees: number): [number, number] {
  const th = (degrees * Math.PI) / 180;
  const c = Math.cos(th), s = Math.sin(th);
  return [re * c - im * s, re * s + im * c];
}

function polar([re, im]: [number, number]): Polar {
  return [Math.hypot(re, im), (Math.atan2(im, re) * 180) / Math.PI];
}

export function phasePhasors(q: QuantityWire | null): PhasorSet | null {
  if (q === null) return null;
  const { zero, pos, neg } = q;
  if (zero !== null && pos !== null && neg !== null && zero[1] !== null && pos[1] !== null && neg[1] !== null) {
    const x0 = rect(zero as [number, number]), x1 = rect(pos as [number, number]), x2 = rect(neg as [number, number]);
    const sum = (...xs: [number, number][]): [number, number] => xs.reduce((acc, x) => [acc[0] + x[0], acc[1] + x[1]], [0, 0]);
    return {
      a: polar(sum(x0, x1, x2)),
      b: polar(sum(x0, rotate(x1, 240), rotate(x2, 120))),
      c: polar(sum(x0, rotate(x1, 120), rotate(x2, 240))),
    };
  }
  if (q.rms !== null) return { a: [q.rms.a, null], b: [q.rms.b, null], c: [q.rms.c, null] };
  return null;
}
