/**
 * Overview: every feeder as a card with voltage u2 and u0, current u2 and
 * load (I1) against their limits, the worst 10-min values of the last 24 h,
 * active alarms and data freshness. Sortable and filterable; live updates.
 */
import type { AlarmWire, Overview, OverviewFeeder } from '../api.js';
import { api } from '../api.js';
import { esc } from '../dom.js';
import { age, amps, clock, levelOf, pct, type Level } from '../format.js';
import { onLive } from '../live.js';
import type { View } from '../view.js';

type SortKey = 'name' | 'vU2' | 'vU0' | 'iU2' | 'load' | 'alarms' | 'fresh';
const SORT_LABEL: Record<SortKey, string> = {
  name: 'Name',
  vU2: 'Voltage u2 (highest first)',
  vU0: 'Voltage u0 (highest first)',
  iU2: 'Current u2 (highest first)',
  load: 'Load I1 (highest first)',
  alarms: 'Active alarms (most first)',
  fresh: 'Data age (oldest first)',
};

const RANK: Record<Level, number> = { ok: 0, warning: 1, alarm: 2 };

function meter(value: number | null | undefined, limits: { warning: number; alarm: number; enabled: boolean }, level: Level): string {
  const full = limits.alarm * 1.5;
  const w = value === null || value === undefined ? 0 : Math.min(100, (100 * value) / full);
  const tick = (x: number) => `<i style="left:${((100 * x) / full).toFixed(1)}%"></i>`;
  return `<div class="meter" data-level="${level}"><span style="width:${w.toFixed(1)}%"></span>${limits.enabled ? tick(limits.warning) + tick(limits.alarm) : ''}</div>`;
}

export class OverviewView implements View {
  private data: Overview | null = null;
  private skewMs = 0;
  private filter = '';
  private sort: SortKey = 'name';
  private el: HTMLElement | null = null;
  private off: (() => void) | null = null;
  private timer: number | null = null;
  private pending = false;

  async mount(el: HTMLElement): Promise<void> {
    this.el = el;
    try {
      const saved = localStorage.getItem('seqmon.sort') as SortKey | null;
      if (saved !== null && saved in SORT_LABEL) this.sort = saved;
    } catch {
      // no storage
    }
    el.innerHTML = `
      <div class="toolbar">
        <h1>Feeders</h1>
        <span class="muted" id="ov-count"></span>
        <span class="grow"></span>
        <label><span class="visually-hidden">Filter feeders</span><input id="ov-filter" type="search" placeholder="Filter by name" autocomplete="off"></label>
        <label>Sort <select id="ov-sort">${(Object.keys(SORT_LABEL) as SortKey[]).map((k) => `<option value="${k}"${k === this.sort ? ' selected' : ''}>${SORT_LABEL[k]}</option>`).join('')}</select></label>
      </div>
      <div id="ov-cards" class="cards" aria-live="off"><div class="empty">Loading feeders…</div></div>`;
    const filter = el.querySelector<HTMLInputElement>('#ov-filter')!;
    filter.addEventListener('input', () => {
      this.filter = filter.value.trim().toLowerCase();
      this.render();
    });
    const sort = el.querySelector<HTMLSelectElement>('#ov-sort')!;
    sort.addEventListener('change', () => {
      this.sort = sort.value as SortKey;
      try {
        localStorage.setItem('seqmon.sort', this.sort);
      } catch {
        // no storage
      }
      this.render();
    });
    this.off = onLive((m) => {
      if (this.data === null) return;
      const f = this.data.feeders.find((x) => x.id === m.data.feeder);
      if (f === undefined) return;
      if (m.type === 'result') {
        if (m.data.window !== 'frame' && m.data.window !== 'basic' && m.data.window !== '3s') return;
        f.latest = m.data;
        f.lastTs = m.data.ts;
      } else if (m.type === 'alarm') {
        f.activeAlarms = f.activeAlarms.filter((a) => a.condition !== m.data.condition);
        if (m.data.state === 'raised') f.activeAlarms.push(m.data);
      } else return;
      this.schedule();
    });
    this.timer = window.setInterval(() => this.render(), 5_000);
    const data = await api.overview();
    this.data = data;
    this.skewMs = Date.parse(data.now) - Date.now();
    this.render();
  }

  unmount(): void {
    this.off?.();
    if (this.timer !== null) clearInterval(this.timer);
    this.el = null;
  }

  /** Live messages arrive many per second with many feeders: redraw at most once per animation frame. */
  private schedule(): void {
    if (this.pending) return;
    this.pending = true;
    requestAnimationFrame(() => {
      this.pending = false;
      this.render();
    });
  }

  private level(f: OverviewFeeder): Level {
    let lv: Level = 'ok';
    for (const a of f.activeAlarms) if (RANK[a.level] > RANK[lv]) lv = a.level;
    const v = f.latest?.v ?? null, i = f.latest?.i ?? null;
    for (const x of [levelOf(v?.u2, f.limits.voltageUnbalance), levelOf(v?.u0, f.limits.zeroSequenceVoltage), levelOf(i?.u2, f.limits.currentUnbalance)]) {
      if (RANK[x] > RANK[lv]) lv = x;
    }
    return lv;
  }

  private ageMs(f: OverviewFeeder): number | null {
    return f.lastTs === null ? null : Date.now() + this.skewMs - Date.parse(f.lastTs);
  }

  private sorted(list: OverviewFeeder[]): OverviewFeeder[] {
    const key = (f: OverviewFeeder): number => {
      switch (this.sort) {
        case 'vU2': return f.latest?.v?.u2 ?? -1;
        case 'vU0': return f.latest?.v?.u0 ?? -1;
        case 'iU2': return f.latest?.i?.u2 ?? -1;
        case 'load': return f.latest?.i?.pos?.[0] ?? -1;
        case 'alarms': return f.activeAlarms.length;
        case 'fresh': return this.ageMs(f) ?? Number.MAX_SAFE_INTEGER;
        default: return 0;
      }
    };
    return list.slice().sort((x, y) => (this.sort === 'name' ? x.id.localeCompare(y.id, undefined, { numeric: true }) : key(y) - key(x) || x.id.localeCompare(y.id)));
  }

  private card(f: OverviewFeeder): string {
    const v = f.latest?.v ?? null, i = f.latest?.i ?? null;
    const ageMs = this.ageMs(f);
    const fresh = ageMs === null ? 'none' : ageMs > f.limits.staleAfterMs ? 'stale' : 'ok';
    const freshText = ageMs === null ? 'no data yet' : fresh === 'stale' ? `stale · ${age(ageMs)}` : age(ageMs);
    const lvV = levelOf(v?.u2, f.limits.voltageUnbalance);
    const lvV0 = levelOf(v?.u0, f.limits.zeroSequenceVoltage);
    const lvI = levelOf(i?.u2, f.limits.currentUnbalance);
    const alarms = f.activeAlarms
      .map((a: AlarmWire) => `<span class="pill ${a.level}" title="${esc(a.message)}">${a.level === 'alarm' ? '◆' : '▲'} ${esc(a.condition)}${a.phase ? ` (${esc(a.phase)})` : ''}</span>`)
      .join(' ');
    const w = f.worst24h;
    const worst = `24 h worst: V u2 <span class="num">${pct(w.vU2?.value)}</span>${w.vU2 ? ` <span title="${esc(w.vU2.ts)}">(${esc(clock(w.vU2.ts))})</span>` : ''} · I u2 <span class="num">${pct(w.iU2?.value, 1)}</span> · peak I1 <span class="num">${amps(w.i1?.value)}</span>`;
    const href = `#/feeder/${encodeURIComponent(f.id)}`;
    return `<article class="card" data-feeder="${esc(f.id)}" data-level="${this.level(f)}" data-fresh="${fresh}">
      <div class="card-head"><a href="${href}">${esc(f.id)}</a><span class="fresh" data-fresh="${fresh}">${esc(freshText)}</span></div>
      <div class="metric"><span class="label">Voltage unbalance u2</span><span class="value" data-metric="vU2">${pct(v?.u2)}</span>${meter(v?.u2, f.limits.voltageUnbalance, lvV)}</div>
      <div class="metric"><span class="label">Zero-sequence u0</span><span class="value" data-metric="vU0">${pct(v?.u0)}</span>${meter(v?.u0, f.limits.zeroSequenceVoltage, lvV0)}</div>
      <div class="metric"><span class="label">Current unbalance u2</span><span class="value" data-metric="iU2">${pct(i?.u2, 1)}</span>${meter(i?.u2, f.limits.currentUnbalance, lvI)}</div>
      <div class="metric"><span class="label">Load I1</span><span class="value" data-metric="i1">${amps(i?.pos?.[0])}</span></div>
      ${alarms === '' ? '' : `<div class="alarms">${alarms}</div>`}
      <div class="worst">${worst}</div>
    </article>`;
  }

  private render(): void {
    if (this.el === null || this.data === null) return;
    const host = this.el.querySelector('#ov-cards');
    if (host === null) return;
    const list = this.sorted(this.data.feeders.filter((f) => this.filter === '' || f.id.toLowerCase().includes(this.filter)));
    this.el.querySelector('#ov-count')!.textContent = `${list.length} of ${this.data.feeders.length}`;
    if (this.data.feeders.length === 0) {
      host.innerHTML = '<div class="empty">No feeders yet: the agent lists a feeder once its first frame arrives or once it is configured.</div>';
      return;
    }
    host.innerHTML = list.length === 0 ? '<div class="empty">No feeder matches the filter.</div>' : list.map((f) => this.card(f)).join('');
    host.setAttribute('data-rendered', String(list.length));
  }
}
