// Time to first render in headless Chromium (Debian's /usr/bin/chromium):
// the overview with 200 feeders against the overview with 1 feeder, and a
// 7-day trend at 3-s resolution (201,600 points per chart) against a 1-hour
// one (1,200 points), each pair in the same run. Needs `npm run build`.
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';
import { buildServer } from '../dist/agent/server/build-server.js';
import { LiveHub } from '../dist/agent/publish/live-hub.js';
import { MemoryStore } from '../dist/agent/stores/memory/memory-store.js';
import { result, DAY } from './_store-data.mjs';
import { benchDeps, feederInfo } from './_http-load.mjs';

const here = dirname(fileURLToPath(import.meta.url));
const DASHBOARD = resolve(here, '..', 'dist', 'dashboard');
const CHROMIUM = '/usr/bin/chromium';
const ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];
const REPEATS = 3;

async function serve(feederCount, trendFeeder) {
  const now = Date.now();
  const store = new MemoryStore();
  const feeders = Array.from({ length: feederCount }, (_, k) => feederInfo(`SUB-F${String(k + 1).padStart(3, '0')}`, now));
  const latest = new Map();
  for (const [k, f] of feeders.entries()) {
    latest.set(f.id, { ...result(f.id, '3s', now - 1000, k), window: 'frame' });
    const day = [];
    for (let j = 0; j < 144; j++) day.push(result(f.id, '10min', now - DAY + j * 600_000, j + k));
    await store.writeResults(day);
  }
  if (trendFeeder) {
    const id = feeders[0].id;
    for (let start = now - 7 * DAY; start < now; start += DAY) {
      const batch = [];
      for (let ts = start; ts < Math.min(now, start + DAY); ts += 3000) batch.push(result(id, '3s', ts, batch.length));
      await store.writeResults(batch);
    }
  }
  const app = await buildServer(benchDeps({ store, live: new LiveHub(), feeders, latest, dashboardDir: DASHBOARD, now }));
  await app.listen({ port: 0, host: '127.0.0.1' });
  return { app, base: `http://127.0.0.1:${app.server.address().port}`, now, firstId: feeders[0].id };
}

/** Best-of-N ms for the API request alone (server query + serialization + transfer), to tell server time from browser time. */
async function timeFetch(url) {
  let best = Infinity;
  for (let r = 0; r < REPEATS; r++) {
    const t0 = performance.now();
    const res = await fetch(url);
    await res.arrayBuffer();
    best = Math.min(best, performance.now() - t0);
  }
  return best;
}

/** Best-of-N ms from navigation start until `selector` matches. */
async function timeToRender(context, url, selector) {
  let best = Infinity;
  for (let r = 0; r < REPEATS; r++) {
    const page = await context.newPage();
    await page.goto(url, { waitUntil: 'commit' });
    await page.waitForSelector(selector, { timeout: 120_000 });
    const ms = await page.evaluate(() => performance.now());
    best = Math.min(best, ms);
    await page.close();
  }
  return best;
}

export async function run() {
  if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} missing: apt-get install -y chromium`);
  if (!existsSync(join(DASHBOARD, 'index.html'))) throw new Error('dist/dashboard missing: run npm run build');
  const profile = mkdtempSync(join(tmpdir(), 'seqmon-bench-chromium-'));
  const context = await chromium.launchPersistentContext(profile, { executablePath: CHROMIUM, headless: true, args: ARGS, viewport: { width: 1366, height: 900 } });
  const servers = [];
  try {
    const one = await serve(1, false);
    servers.push(one);
    const many = await serve(200, true);
    servers.push(many);
    const oneMs = await timeToRender(context, `${one.base}/`, '#ov-cards[data-rendered="1"]');
    const manyMs = await timeToRender(context, `${many.base}/`, '#ov-cards[data-rendered="200"]');
    const id = encodeURIComponent(many.firstId);
    const hourUrl = `${many.base}/#/feeder/${id}?from=${many.now - 3_600_000}&to=${many.now}&window=3s`;
    const weekUrl = `${many.base}/#/feeder/${id}?from=${many.now - 7 * DAY}&to=${many.now}&window=3s`;
    const hourMs = await timeToRender(context, hourUrl, '[data-chart="i1"][data-window="3s"]');
    const weekMs = await timeToRender(context, weekUrl, '[data-chart="i1"][data-points]:not([data-points="0"])[data-window="3s"]');
    const overviewApiMs = await timeFetch(`${many.base}/api/overview`);
    const weekApiMs = await timeFetch(`${many.base}/api/feeders/${id}/trend?from=${many.now - 7 * DAY}&to=${many.now}&window=3s&fields=vU2,vU0,iU2,i1`);
    const page = await context.newPage();
    await page.goto(weekUrl);
    await page.waitForSelector('[data-chart="i1"][data-window="3s"]:not([data-points="0"])', { timeout: 120_000 });
    const weekPoints = Number(await page.getAttribute('[data-chart="i1"]', 'data-points'));
    await page.close();
    return {
      name: 'Dashboard first render (headless Chromium)',
      figures: {
        'overview 1 feeder ms (baseline)': Math.round(oneMs),
        'overview 200 feeders ms': Math.round(manyMs),
        'overview 200 / 1 ratio': Number((manyMs / oneMs).toFixed(2)),
        'of which GET /api/overview (200 feeders) ms': Math.round(overviewApiMs),
        'trend 1 h of 3-s values ms (baseline, 4 charts)': Math.round(hourMs),
        'trend 7 days of 3-s values ms (4 charts)': Math.round(weekMs),
        'trend 7 d / 1 h ratio': Number((weekMs / hourMs).toFixed(2)),
        'of which GET trend (7 d, 3 s, 4 columns, memory store) ms': Math.round(weekApiMs),
        'points per chart, 7 days': weekPoints,
      },
    };
  } finally {
    await context.close().catch(() => undefined);
    rmSync(profile, { recursive: true, force: true });
    for (const s of servers) await s.app.close();
  }
}
