/**
 * Daily load shapes, per unit of each load's peak, as functions of the hour
 * of day (0-24). Invented but typical in form (common practice): residential
 * load has a morning and a larger evening peak, commercial load a daytime
 * plateau, industrial load two shifts, rural load early peaks.
 */
export type LoadShapeName = 'residential' | 'commercial' | 'industrial' | 'rural';

/** Gaussian bump on the 24-h circle, so the shape is continuous across midnight. */
function bump(hour: number, centre: number, width: number): number {
  let d = Math.abs(hour - centre) % 24;
  if (d > 12) d = 24 - d;
  return Math.exp(-0.5 * (d / width) ** 2);
}

/** Smooth step up at `on` and down at `off` (hours), logistic edges about an hour wide. */
function plateau(hour: number, on: number, off: number): number {
  const up = 1 / (1 + Math.exp(-(hour - on) * 2.5));
  const down = 1 / (1 + Math.exp((hour - off) * 2.5));
  return up * down;
}

export function loadShape(name: LoadShapeName, hour: number): number {
  switch (name) {
    case 'residential':
      return Math.min(1, 0.36 + 0.28 * bump(hour, 7.5, 1.3) + 0.12 * bump(hour, 13, 3) + 0.62 * bump(hour, 19.2, 2.1));
    case 'commercial':
      return Math.min(1, 0.3 + 0.66 * plateau(hour, 8, 18.5) + 0.04 * bump(hour, 14, 2));
    case 'industrial':
      return Math.min(1, 0.62 + 0.36 * plateau(hour, 6, 22) + 0.02 * bump(hour, 11, 1));
    case 'rural':
      return Math.min(1, 0.33 + 0.34 * bump(hour, 6.5, 1.4) + 0.1 * bump(hour, 12.5, 2.5) + 0.58 * bump(hour, 18.6, 2.0));
  }
}
