/**
 * Fortescue transform, amplitude-invariant, referred to phase a:
 *   X0 = (Xa + Xb + Xc)/3
 *   X1 = (Xa + a·Xb + a²·Xc)/3
 *   X2 = (Xa + a²·Xb + a·Xc)/3,   a = 1∠120°
 * (C. L. Fortescue, "Method of symmetrical co-ordinates applied to the solution
 * of polyphase networks", AIEE Trans. 1918; same matrix in Glover, Sarma &
 * Overbye, Power System Analysis and Design, ch. 8.)
 *
 * Buffers are interleaved rectangular: abc = [aRe, aIm, bRe, bIm, cRe, cIm],
 * seq = [0Re, 0Im, 1Re, 1Im, 2Re, 2Im]. Both are caller-owned; nothing is
 * allocated here.
 */

const HALF = 0.5;
const SQRT3_2 = Math.sqrt(3) / 2;
const THIRD = 1 / 3;

export function fortescueInto(abc: Float64Array, seq: Float64Array): void {
  const ar = abc[0]!, ai = abc[1]!, br = abc[2]!, bi = abc[3]!, cr = abc[4]!, ci = abc[5]!;
  // a·b with a = -1/2 + j√3/2;  a²·c with a² = -1/2 - j√3/2
  const abr = -HALF * br - SQRT3_2 * bi, abi = SQRT3_2 * br - HALF * bi;
  const a2br = -HALF * br + SQRT3_2 * bi, a2bi = -SQRT3_2 * br - HALF * bi;
  const acr = -HALF * cr - SQRT3_2 * ci, aci = SQRT3_2 * cr - HALF * ci;
  const a2cr = -HALF * cr + SQRT3_2 * ci, a2ci = -SQRT3_2 * cr - HALF * ci;
  seq[0] = (ar + br + cr) * THIRD;
  seq[1] = (ai + bi + ci) * THIRD;
  seq[2] = (ar + abr + a2cr) * THIRD;
  seq[3] = (ai + abi + a2ci) * THIRD;
  seq[4] = (ar + a2br + acr) * THIRD;
  seq[5] = (ai + a2bi + aci) * THIRD;
}

/** Inverse transform: Xa = X0+X1+X2, Xb = X0+a²X1+aX2, Xc = X0+aX1+a²X2. */
export function inverseFortescueInto(seq: Float64Array, abc: Float64Array): void {
  const zr = seq[0]!, zi = seq[1]!, pr = seq[2]!, pi = seq[3]!, nr = seq[4]!, ni = seq[5]!;
  const a2pr = -HALF * pr + SQRT3_2 * pi, a2pi = -SQRT3_2 * pr - HALF * pi;
  const apr = -HALF * pr - SQRT3_2 * pi, api = SQRT3_2 * pr - HALF * pi;
  const anr = -HALF * nr - SQRT3_2 * ni, ani = SQRT3_2 * nr - HALF * ni;
  const a2nr = -HALF * nr + SQRT3_2 * ni, a2ni = -SQRT3_2 * nr - HALF * ni;
  abc[0] = zr + pr + nr;
  abc[1] = zi + pi + ni;
  abc[2] = zr + a2pr + anr;
  abc[3] = zi + a2pi + ani;
  abc[4] = zr + apr + a2nr;
  abc[5] = zi + api + a2ni;
}
