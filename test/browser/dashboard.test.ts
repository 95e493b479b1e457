/**
 * The dashboard in a real browser (Debian's Chromium, headless) against a
 * real server on a free loopback port, with a memory store seeded with the
 * invented data of the fictional demo substation. Screenshots of each view
 * go to test-artifacts/ (gitignored) for a human look.
 */
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import type { FastifyInstance } from 'fastify';
import { add, abs, arg, complex, multiply, type Complex } from 'mathjs';
import type { Page } from 'playwright-core';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { LiveHub } from '../../agent/publish/live-hub.js';
import { buildServer } from '../../agent/server/build-server.js';
import { launchChromium, type Browser } from '../helpers/chromium.js';
import { freePort } from '../helpers/free-port.js';
import { DEMO_PROFILES, alarm, faultEvent, feederInfo, makeDeps, seedStore, type TestDeps } from '../helpers/server-fixture.js';

const ROOT = resolve(import.meta.dirname, '..', '..');
const ARTIFACTS = join(ROOT, 'test-artifacts');
const NOW = Date.now();
const HOUR = 3_600_000;

let dashDir: string;
let app: FastifyInstance;
let deps: TestDeps;
let hub: LiveHub;
let base: string;
let browser: Browser;
let page: Page | null = null;

beforeAll(async () => {
  mkdirSync(ARTIFACTS, { recursive: true });
  dashDir = mkdtempSync(join(tmpdir(), 'seqmon-dashboard-'));
  execFileSync(process.execPath, [join(ROOT, 'scripts', 'build-dashboard.mjs'), dashDir], { stdio: 'pipe' });
  hub = new LiveHub({ bufferCapacity: 256, resultIntervalMs: 0 });
  deps = makeDeps({ now: NOW, hub, dashboardDir: dashDir, liveHeartbeatMs: 5_000 });
  // A fourth feeder is configured but has sent nothing yet.
  const configured = [...DEMO_PROFILES.map((p) => feederInfo(p.id, NOW - 1_000)), feederInfo('EH-F4', null)];
  (deps as { feeders: TestDeps['feeders'] }).feeders = () => configured;
  await seedStore(deps.store, DEMO_PROFILES, NOW);
  await deps.store.writeAlarm(alarm('EH-F3', NOW - 2 * HOUR, 'voltage-unbalance', 'raised', 3.05, 3));
  await deps.store.writeAlarm({ ...alarm('EH-F2', NOW - 5 * HOUR, 'current-unbalance', 'raised', 24.1, 15), level: 'warning' });
  await deps.store.writeAlarm({ ...alarm('EH-F2', NOW - 4 * HOUR, 'current-unbalance', 'cleared', 13.2, 15), level: 'warning' });
  await deps.store.writeEvent(faultEvent('EH-F2', NOW - 3 * HOUR));
  app = await buildServer(deps);
  const port = await freePort();
  await app.listen({ port, host: '127.0.0.1' });
  base = `http://127.0.0.1:${port}`;
  browser = await launchChromium();
});

afterEach(async () => {
  await page?.close();
  page = null;
});

afterAll(async () => {
  await browser?.close();
  await app?.close();
  rmSync(dashDir, { recursive: true, force: true });
});

async function open(path: string, viewport?: { width: number; height: number }): Promise<Page> {
  page = await browser.context.newPage();
  if (viewport !== undefined) await page.setViewportSize(viewport);
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto(base + path);
  await page.waitForSelector('#link-state[data-state="live"]', { timeout: 10_000 });
  expect(errors).toEqual([]);
  return page;
}

async function apiJson(path: string): Promise<any> {
  return (await fetch(base + path)).json();
}

/** Phase phasors from the API's sequence components, computed independently with mathjs complex numbers. */
function referencePhases(q: { zero: [number, number]; pos: [number, number]; neg: [number, number] }): Record<'a' | 'b' | 'c', number> {
  const c = polarC;
  const a = polarC([1, 120]); // a = 1∠120° (Fortescue operator)
  const a2 = multiply(a, a) as Complex;
  const x0 = c(q.zero), x1 = c(q.pos), x2 = c(q.neg);
  const ang = (z: Complex) => ((arg(z) as number) * 180) / Math.PI;
  return {
    a: ang(add(add(x0, x1), x2) as Complex),
    b: ang(add(add(x0, multiply(a2, x1)), multiply(a, x2)) as Complex),
    c: ang(add(add(x0, multiply(a, x1)), multiply(a2, x2)) as Complex),
  };
}

function polarC(p: [number, number]): Complex {
  const th = (p[1] * Math.PI) / 180;
  return complex(p[0] * Math.cos(th), p[0] * Math.sin(th));
}

function angleDiff(x: number, y: number): number {
  return Math.abs(((x - y + 540) % 360) - 180);
}

describe('dashboard overview', () => {
  it('shows every feeder with its latest voltage u2, its alarms, and a no-data state for a silent feeder', async () => {
    const p = await open('/');
    await p.waitForSelector('#ov-cards[data-rendered="4"]');
    const api = await apiJson('/api/feeders/EH-F3/latest');
    const shown = await p.textContent('[data-feeder="EH-F3"] [data-metric="vU2"]');
    expect(shown).toBe(`${api.result.v.u2.toFixed(2)} %`);
    expect(await p.getAttribute('[data-feeder="EH-F3"]', 'data-level')).toBe('alarm');
    expect(await p.textContent('[data-feeder="EH-F4"] .fresh')).toBe('no data yet');
    expect(await p.isVisible('#demo-badge')).toBe(true);
    await p.screenshot({ path: join(ARTIFACTS, 'overview-dark.png'), fullPage: true });
  });

  it('filters and sorts the cards', async () => {
    const p = await open('/');
    await p.waitForSelector('#ov-cards[data-rendered="4"]');
    await p.selectOption('#ov-sort', 'vU2');
    const order = await p.$$eval('.card', (els) => els.map((e) => e.getAttribute('data-feeder')));
    expect(order.slice(0, 3)).toEqual(['EH-F3', 'EH-F2', 'EH-F1']);
    await p.fill('#ov-filter', 'f2');
    await p.waitForSelector('#ov-cards[data-rendered="1"]');
  });

  it('switches between light and dark theme and remembers the choice after a reload', async () => {
    const p = await open('/');
    await p.waitForSelector('#ov-cards[data-rendered="4"]');
    const before = await p.getAttribute('html', 'data-theme');
    await p.click('#theme-toggle');
    const after = await p.getAttribute('html', 'data-theme');
    expect(after).not.toBe(before);
    await p.reload();
    await p.waitForSelector('#ov-cards[data-rendered="4"]');
    expect(await p.getAttribute('html', 'data-theme')).toBe(after);
    await p.screenshot({ path: join(ARTIFACTS, `overview-${after}.png`), fullPage: true });
    await p.click('#theme-toggle'); // leave the profile as it was
  });
});

describe('dashboard feeder view', () => {
  it('draws voltage and current phasors at the angles the API reports', async () => {
    const p = await open('/#/feeder/EH-F2');
    await p.waitForSelector('line.phasor-line[data-quantity="i"]');
    const latest = (await apiJson('/api/feeders/EH-F2/latest')).result;
    for (const kind of ['v', 'i'] as const) {
      const expected = referencePhases(latest[kind]);
      const lines = await p.$$eval(`line.phasor-line[data-quantity="${kind}"]`, (els) =>
        els.map((e) => ({ phase: e.getAttribute('data-phase')!, x: Number(e.getAttribute('x2')), y: Number(e.getAttribute('y2')), x1: Number(e.getAttribute('x1')), y1: Number(e.getAttribute('y1')) })),
      );
      expect(lines).toHaveLength(3);
      for (const l of lines) {
        // SVG y grows downwards, so the drawn angle is atan2(-(y2-y1), x2-x1).
        const drawn = (Math.atan2(-(l.y - l.y1), l.x - l.x1) * 180) / Math.PI;
        expect(angleDiff(drawn, expected[l.phase as 'a' | 'b' | 'c']), `${kind}${l.phase}`).toBeLessThan(0.05);
      }
    }
    await p.screenshot({ path: join(ARTIFACTS, 'feeder.png'), fullPage: true });
  });

  it('draws the phasor lengths in proportion to the phase magnitudes', async () => {
    const p = await open('/#/feeder/EH-F3');
    await p.waitForSelector('line.phasor-line[data-quantity="i"]');
    const latest = (await apiJson('/api/feeders/EH-F3/latest')).result;
    const q = latest.i;
    const c = polarC;
    const a = polarC([1, 120]);
    const mags = {
      a: abs(add(add(c(q.zero), c(q.pos)), c(q.neg)) as Complex) as unknown as number,
      b: abs(add(add(c(q.zero), multiply(multiply(a, a), c(q.pos))), multiply(a, c(q.neg))) as Complex) as unknown as number,
      c: abs(add(add(c(q.zero), multiply(a, c(q.pos))), multiply(multiply(a, a), c(q.neg))) as Complex) as unknown as number,
    };
    const lens = await p.$$eval('line.phasor-line[data-quantity="i"]', (els) => els.map((e) => ({ phase: e.getAttribute('data-phase')!, len: Math.hypot(Number(e.getAttribute('x2')), Number(e.getAttribute('y2'))) })));
    const byPhase = Object.fromEntries(lens.map((l) => [l.phase, l.len]));
    expect(byPhase.a / byPhase.b).toBeCloseTo(mags.a / mags.b, 3);
    expect(byPhase.c / byPhase.b).toBeCloseTo(mags.c / mags.b, 3);
    await p.evaluate(() => localStorage.setItem('seqmon.theme', 'dark'));
    await p.reload();
    await p.waitForSelector('[data-chart="vU2"][data-window="3s"]');
    await p.screenshot({ path: join(ARTIFACTS, 'feeder-dark.png'), fullPage: true });
    await p.evaluate(() => localStorage.removeItem('seqmon.theme'));
  });

  it('switches the phase colours to the high-contrast alternative and back', async () => {
    const p = await open('/#/feeder/EH-F1');
    await p.waitForSelector('line.phasor-line[data-quantity="v"][data-phase="a"]');
    const stroke = () => p.$eval('line.phasor-line[data-quantity="v"][data-phase="a"]', (e) => getComputedStyle(e).stroke);
    const iec = await stroke();
    await p.selectOption('#palette-select', 'contrast');
    // Okabe-Ito orange #e69f00 for L1 (docs/dashboard.md).
    expect(await stroke()).toBe('rgb(230, 159, 0)');
    await p.screenshot({ path: join(ARTIFACTS, 'feeder-high-contrast.png') });
    await p.selectOption('#palette-select', 'iec');
    expect(await stroke()).toBe(iec);
  });

  it('changes the charts when another time range is picked', async () => {
    const p = await open('/#/feeder/EH-F1');
    const chart = '[data-chart="vU2"]';
    await p.waitForSelector(`${chart}[data-window="3s"]`);
    const livePoints = Number(await p.getAttribute(chart, 'data-points'));
    // Live shows the last hour of 3-s values; the seeded ones end at NOW, a few seconds ago.
    const liveFrom = Date.parse((await p.getAttribute(chart, 'data-from'))!);
    expect(liveFrom).toBeGreaterThan(Date.now() - HOUR - 60_000);
    const liveApi = await apiJson(`/api/feeders/EH-F1/trend?from=${liveFrom}&to=${NOW}&window=3s`);
    expect(livePoints).toBe(liveApi.count);
    await p.click('button[data-range="7d"]');
    await p.waitForSelector(`${chart}[data-window="10min"]`);
    const weekPoints = Number(await p.getAttribute(chart, 'data-points'));
    const api = await apiJson(`/api/feeders/EH-F1/trend?from=${Date.now() - 7 * 24 * HOUR}`);
    expect(Math.abs(weekPoints - api.count)).toBeLessThanOrEqual(1);
    expect(await p.getAttribute(chart, 'data-limits')).toBe('2,3');
    await p.screenshot({ path: join(ARTIFACTS, 'feeder-7d.png'), fullPage: true });
  });

  it('shows the aggregation window picked for the range, and exports that window', async () => {
    const p = await open('/#/feeder/EH-F1');
    const chart = '[data-chart="vU2"]';
    await p.waitForSelector(`${chart}[data-window="3s"]`);
    // The live view follows the 3-s values: no window to pick there.
    expect(await p.isDisabled('#fv-win')).toBe(true);
    await p.click('button[data-range="7d"]');
    await p.waitForSelector(`${chart}[data-window="10min"]`);
    expect(await p.isDisabled('#fv-win')).toBe(false);
    await p.selectOption('#fv-win', '2h');
    await p.waitForSelector(`${chart}[data-window="2h"]`);
    const points = Number(await p.getAttribute(chart, 'data-points'));
    const api = await apiJson(`/api/feeders/EH-F1/trend?from=${Date.now() - 7 * 24 * HOUR}&window=2h`);
    expect(Math.abs(points - api.count)).toBeLessThanOrEqual(1);
    expect(await p.getAttribute('#fv-csv', 'href')).toMatch(/window=2h/);
    await p.selectOption('#fv-win', 'auto');
    await p.waitForSelector(`${chart}[data-window="10min"]`);
  });

  it('downloads the CSV export with the caution line, units and the data', async () => {
    const p = await open('/#/feeder/EH-F1');
    await p.waitForSelector('[data-chart="vU2"][data-window="3s"]');
    const shownPoints = Number(await p.getAttribute('[data-chart="vU2"]', 'data-points'));
    const [download] = await Promise.all([p.waitForEvent('download'), p.click('#fv-csv')]);
    const file = join(dashDir, 'export.csv');
    await download.saveAs(file);
    const lines = readFileSync(file, 'utf8').trimEnd().split('\n');
    expect(lines[0]).toMatch(/^# Caution: moving load between phases/);
    const header = lines.find((l) => !l.startsWith('#'))!.split(',');
    expect(header).toEqual(expect.arrayContaining(['ts_utc', 'i_a_A', 'v_u2_pct', 'i_u2_pct', 'flagged']));
    const rows = lines.filter((l) => !l.startsWith('#')).slice(1);
    // The export covers the range the charts show.
    expect(rows.length).toBe(shownPoints);
    const ts = Date.parse(rows[0]!.split(',')[0]!);
    expect(Number(rows[0]!.split(',')[header.indexOf('v_u2_pct')])).toBeCloseTo(DEMO_PROFILES[0]!.vU2(ts), 4);
  });

  it('lays out for a tablet in portrait', async () => {
    const p = await open('/#/feeder/EH-F2', { width: 768, height: 1024 });
    await p.waitForSelector('[data-chart="iU2"][data-window="3s"]');
    const overflow = await p.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await p.screenshot({ path: join(ARTIFACTS, 'feeder-tablet.png'), fullPage: true });
  });
});

describe('dashboard live updates', () => {
  it('shows an alarm published into the live hub without a reload', async () => {
    const p = await open('/#/alarms');
    await p.waitForSelector('#al-active table, #al-active .muted');
    await p.evaluate(() => ((window as unknown as { marker: number }).marker = 42));
    hub.publishAlarm(alarm('EH-F1', Date.now(), 'open-phase', 'raised', 0.97, 0.4, 'c'));
    await p.waitForSelector('#al-active tr[data-feeder="EH-F1"][data-condition="open-phase"]', { timeout: 5_000 });
    expect(await p.evaluate(() => (window as unknown as { marker: number }).marker)).toBe(42);
    expect(await p.textContent('#al-active tr[data-feeder="EH-F1"][data-condition="open-phase"]')).toContain('licensed practice');
    await p.waitForSelector('.toast');
    await p.screenshot({ path: join(ARTIFACTS, 'alarms.png'), fullPage: true });
    hub.publishAlarm(alarm('EH-F1', Date.now() + 1, 'open-phase', 'cleared', 0.01, 0.4, 'c'));
    await p.waitForSelector('#al-active tr[data-feeder="EH-F1"][data-condition="open-phase"]', { state: 'detached', timeout: 5_000 });
  });

  it('updates an overview card when a new result arrives', async () => {
    const p = await open('/');
    await p.waitForSelector('#ov-cards[data-rendered="4"]');
    const r = { ...deps.latestResults.get('EH-F1')!, ts: Date.now(), window: '3s' as const };
    r.v = { ...r.v!, u2: 2.71828 };
    hub.publishResult(r);
    await p.waitForFunction(() => document.querySelector('[data-feeder="EH-F1"] [data-metric="vU2"]')?.textContent === '2.72 %', undefined, { timeout: 5_000 });
  });

  it('shows a banner while a source is down', async () => {
    deps.sources[0] = { name: 'demo-simulator', state: 'reconnecting', since: Date.now() - 10_000, lastError: 'connection refused' };
    try {
      const p = await open('/');
      await p.waitForSelector('#source-banner[data-state="degraded"]');
      expect(await p.textContent('#source-banner')).toContain('reconnecting');
      await p.screenshot({ path: join(ARTIFACTS, 'source-down.png') });
    } finally {
      deps.sources[0] = { name: 'demo-simulator', state: 'connected', since: Date.now(), lastError: null };
    }
  });
});
