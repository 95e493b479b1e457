/** Light/dark theme and phase palette, remembered in localStorage (theme-boot.js applies them before first paint). */

export type Theme = 'light' | 'dark';
export type Palette = 'iec' | 'contrast';

const listeners = new Set<() => void>();

export function currentTheme(): Theme {
  return document.documentElement.dataset.theme === 'light' ? 'light' : 'dark';
}

export function setTheme(t: Theme): void {
  document.documentElement.dataset.theme = t;
  try {
    localStorage.setItem('seqmon.theme', t);
  } catch {
    // private mode: the choice lasts for this page only
  }
  for (const l of listeners) l();
}

export function setPalette(p: Palette): void {
  document.documentElement.dataset.phases = p;
  try {
    localStorage.setItem('seqmon.phases', p);
  } catch {
    // as above
  }
  for (const l of listeners) l();
}

export function currentPalette(): Palette {
  return document.documentElement.dataset.phases === 'contrast' ? 'contrast' : 'iec';
}

/** Called after a theme or palette change (charts draw on canvas and must re-read the colours). */
export function onThemeChange(l: () => void): () => void {
  listeners.add(l);
  return () => listeners.delete(l);
}

/** A CSS variable of the current theme, e.g. cssVar('--ph-a'). */
export function cssVar(name: string): string {
  return getComputedStyle(document.documentElement).getPropertyValue(name).trim();
}
