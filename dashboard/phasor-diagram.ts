/**
 * Phasor diagram as SVG: three phase phasors from the origin, angles
 * counter-clockwise from the positive real axis (the usual mathematical
 * convention), lengths relative to the largest of the three. Each line
 * carries data-phase/data-angle so tests and assistive tools can read it.
 */
import type { PhaseKey, Polar } from './api.js';
import { esc } from './dom.js';
import { deg } from './format.js';

const R = 92; // radius of the outer ring in SVG units (viewBox ±120)
const PHASES: PhaseKey[] = ['a', 'b', 'c'];
const LABEL: Record<PhaseKey, string> = { a: 'L1', b: 'L2', c: 'L3' };

export interface PhasorSet {
  a: Polar;
  b: Polar;
  c: Polar;
}

export function phasorSvg(kind: 'v' | 'i', set: PhasorSet | null, format: (x: number) => string): string {
  const rings = [0.5, 1].map((f) => `<circle class="ring" r="${(R * f).toFixed(1)}"/>`).join('');
  const axes = `<line class="axis" x1="-${R + 8}" y1="0" x2="${R + 8}" y2="0"/><line class="axis" x1="0" y1="-${R + 8}" x2="0" y2="${R + 8}"/>`
    + `<text class="tick" x="${R + 3}" y="11">0°</text><text class="tick" x="4" y="-${R + 2}">90°</text>`;
  if (set === null || PHASES.every((p) => set[p] === null)) {
    return `<svg viewBox="-120 -120 240 240" role="img" aria-label="no phasors yet">${rings}${axes}<text class="tick" x="0" y="30" text-anchor="middle">no data yet</text></svg>`;
  }
  const anglesKnown = PHASES.every((p) => set[p] !== null && set[p]![1] !== null);
  const maxMag = Math.max(...PHASES.map((p) => set[p]?.[0] ?? 0)) || 1;
  let body = '';
  const legend: string[] = [];
  for (const p of PHASES) {
    const ph = set[p];
    if (ph === null) continue;
    const [mag, ang] = ph;
    legend.push(`<span><span class="swatch sw-${p}"></span>${LABEL[p]} <span class="num">${esc(format(mag))} ${esc(deg(ang))}</span></span>`);
    if (!anglesKnown || ang === null) continue;
    const len = (R * mag) / maxMag;
    const th = (ang * Math.PI) / 180;
    const x = len * Math.cos(th);
    const y = -len * Math.sin(th); // SVG y grows downwards
    // Arrow head: a small triangle at the tip, along the phasor.
    const hx = Math.cos(th), hy = -Math.sin(th);
    const px = -hy, py = hx;
    const head = `${x.toFixed(2)},${y.toFixed(2)} ${(x - 9 * hx + 4 * px).toFixed(2)},${(y - 9 * hy + 4 * py).toFixed(2)} ${(x - 9 * hx - 4 * px).toFixed(2)},${(y - 9 * hy - 4 * py).toFixed(2)}`;
    const lx = (len + 14) * Math.cos(th), ly = -(len + 14) * Math.sin(th);
    body += `<line class="phasor-line ph-${p}" data-quantity="${kind}" data-phase="${p}" data-angle="${ang}" data-magnitude="${mag}" x1="0" y1="0" x2="${x.toFixed(3)}" y2="${y.toFixed(3)}"/>`
      + `<polygon class="ph-${p}" points="${head}"/>`
      + `<text class="lbl ph-${p}" x="${lx.toFixed(1)}" y="${(ly + 3).toFixed(1)}" text-anchor="middle">${LABEL[p]}</text>`;
  }
  const note = anglesKnown ? '' : `<text class="tick" x="0" y="40" text-anchor="middle">angles not measured (magnitudes only)</text>`;
  const title = kind === 'v' ? 'Voltage phasors' : 'Current phasors';
  return `<svg viewBox="-120 -120 240 240" role="img" aria-label="${title}">${rings}${axes}${body}${note}</svg><div class="legend">${legend.join('')}</div>`;
}
