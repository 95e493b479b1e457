/**
 * One feeder: live phasor diagrams of voltages and currents, the sequence
 * components as bars and numbers, trend charts with the alarm limits, a time
 * range picker and a choice of aggregation window, load-balance and
 * compliance summaries, alarm and event history, and the CSV export.
 */
import type { AlarmWire, EventWire, FeederInfo, QuantityWire, ResultWire, Trend } from '../api.js';
import { api, withToken } from '../api.js';
import { esc } from '../dom.js';
import { CONDITION_LABEL, cautionOf, PHASE_LABEL, SWITCHING_NOTE, amps, clock, deg, levelOf, pct, volts } from '../format.js';
import { onLive } from '../live.js';
import { phasorSvg } from '../phasor-diagram.js';
import { phasePhasors } from '../phases.js';
import { TrendChart, type ChartSpec } from '../trend-chart.js';
import type { View } from '../view.js';

type RangeMode = 'live' | '24h' | '7d' | 'custom';
/** Aggregation window of the trend: 'auto' lets the server choose from the span (3 s up to 2 days, then 10 min, then 2 h). */
type WindowChoice = 'auto' | '3s' | '10min' | '2h';
const WINDOW_CHOICES: readonly WindowChoice[] = ['auto', '3s', '10min', '2h'];
const HOUR = 3_600_000;

function seqRows(q: QuantityWire | null, fmt: (x: number | null | undefined) => string, cls: string): string {
  if (q === null) return '<tr><td colspan="3" class="muted">not measured</td></tr>';
  const ref = q.pos?.[0] ?? 0;
  const row = (name: string, key: 'pos' | 'neg' | 'zero', css: string) => {
    const p = q[key];
    const width = p === null || ref === 0 ? 0 : Math.min(100, (100 * p[0]) / ref);
    return `<tr><td>${name}</td><td><div class="seq-bar ${css}"><span style="width:${width.toFixed(2)}%"></span></div></td><td class="num" data-seq="${cls}-${key}">${p === null ? 'n/a' : `${fmt(p[0])} ${deg(p[1])}`}</td></tr>`;
  };
  return row('positive (1)', 'pos', 'pos') + row('negative (2)', 'neg', 'neg') + row('zero (0)', 'zero', 'zero');
}

export class FeederView implements View {
  private el: HTMLElement | null = null;
  private info: FeederInfo | null = null;
  private charts: TrendChart[] = [];
  private specs: ChartSpec[] = [];
  private mode: RangeMode = 'live';
  private windowChoice: WindowChoice = 'auto';
  private off: (() => void) | null = null;
  private latestPending: ResultWire | null = null;
  private alarms: AlarmWire[] = [];
  private events: EventWire[] = [];
  private trendSeq = 0;

  constructor(
    private readonly id: string,
    /** Range from a deep link (ISO or epoch ms, optional window); shown as a custom range. */
    private readonly linked: { from: string; to: string; window: string | null } | null = null,
  ) {
    if (linked !== null) {
      this.mode = 'custom';
      const w = linked.window as WindowChoice | null;
      if (w !== null && WINDOW_CHOICES.includes(w)) this.windowChoice = w;
    }
  }

  async mount(el: HTMLElement): Promise<void> {
    this.el = el;
    const { feeders } = await api.feeders();
    const info = feeders.find((f) => f.id === this.id) ?? null;
    if (info === null) {
      el.innerHTML = `<div class="empty">Unknown feeder “${esc(this.id)}”. <a href="#/">Back to all feeders</a></div>`;
      return;
    }
    this.info = info;
    const nominal = `${info.nominalHz} Hz${info.nominalVoltageLN === null ? '' : ` · ${volts(info.nominalVoltageLN)} L-N nominal`}`;
    el.innerHTML = `
      <div class="feeder-head">
        <a href="#/">← Feeders</a>
        <h1 id="fv-title">${esc(info.id)}</h1>
        <span class="muted">${esc(nominal)} · source ${esc(info.sources.join(', ') || 'n/a')}</span>
        <span class="muted" id="fv-fresh"></span>
        <span class="grow"></span>
      </div>
      <div class="feeder-grid">
        <section class="panel phasor" aria-labelledby="fv-v"><h2 id="fv-v">Voltage phasors</h2><div id="fv-phasor-v"></div></section>
        <section class="panel phasor" aria-labelledby="fv-i"><h2 id="fv-i">Current phasors</h2><div id="fv-phasor-i"></div></section>
        <section class="panel seq" aria-labelledby="fv-s"><h2 id="fv-s">Sequence components</h2><div id="fv-seq"></div></section>
      </div>
      <div class="toolbar">
        <h2 style="margin:0">Trends</h2>
        <div class="range" role="group" aria-label="Time range">
          <button type="button" data-range="live">Live</button>
          <button type="button" data-range="24h">24 h</button>
          <button type="button" data-range="7d">7 days</button>
          <button type="button" data-range="custom">Custom</button>
          <span id="fv-custom" hidden>
            <label>from <input type="datetime-local" id="fv-from"></label>
            <label>to <input type="datetime-local" id="fv-to"></label>
            <button type="button" id="fv-apply">Apply</button>
          </span>
        </div>
        <label class="window-pick">values
          <select id="fv-win" title="Aggregation window of the trend (live view: 3 s)">
            <option value="auto">by range</option>
            <option value="3s">3 s</option>
            <option value="10min">10 min</option>
            <option value="2h">2 h</option>
          </select>
        </label>
        <span class="grow"></span>
        <span class="muted" id="fv-window"></span>
        <a id="fv-csv" href="#" download>Export CSV</a>
      </div>
      <div class="charts" id="fv-charts">
        <div class="panel"><div class="chart" data-chart="vU2"></div></div>
        <div class="panel"><div class="chart" data-chart="vU0"></div></div>
        <div class="panel"><div class="chart" data-chart="iU2"></div></div>
        <div class="panel"><div class="chart" data-chart="i1"></div></div>
      </div>
      <div class="summaries">
        <section class="panel"><h2>Load balance</h2><div id="fv-balance" class="muted">…</div></section>
        <section class="panel"><h2>Voltage unbalance compliance (7 days)</h2><div id="fv-compliance" class="muted">…</div></section>
      </div>
      <p class="caution" id="fv-caution">${esc(SWITCHING_NOTE)}</p>
      <div class="history">
        <section class="panel"><h2>Alarm history (7 days)</h2><div id="fv-alarms"></div></section>
        <section class="panel"><h2>Disturbances (7 days)</h2><div id="fv-events"></div></section>
      </div>`;

    const l = info.limits;
    this.specs = [
      { key: 'vU2', title: 'Voltage unbalance u2', unit: '%', limits: l.voltageUnbalance, digits: 2 },
      { key: 'vU0', title: 'Zero-sequence voltage u0', unit: '%', limits: l.zeroSequenceVoltage, digits: 2 },
      { key: 'iU2', title: 'Current unbalance u2', unit: '%', limits: l.currentUnbalance, digits: 1 },
      { key: 'i1', title: 'Positive-sequence current I1', unit: 'A', limits: null, digits: 1 },
    ];
    this.charts = this.specs.map((s) => new TrendChart(el.querySelector<HTMLElement>(`[data-chart="${s.key}"]`)!, s));

    el.querySelectorAll<HTMLButtonElement>('[data-range]').forEach((b) => {
      b.addEventListener('click', () => {
        this.mode = b.dataset.range as RangeMode;
        el.querySelector<HTMLElement>('#fv-custom')!.hidden = this.mode !== 'custom';
        if (this.mode === 'custom') this.prefillCustom();
        else void this.loadTrend();
        this.markRange();
      });
    });
    el.querySelector('#fv-apply')!.addEventListener('click', () => void this.loadTrend());
    const pick = el.querySelector<HTMLSelectElement>('#fv-win')!;
    pick.value = this.windowChoice;
    pick.addEventListener('change', () => {
      this.windowChoice = pick.value as WindowChoice;
      void this.loadTrend();
    });
    if (this.linked !== null) {
      el.querySelector<HTMLElement>('#fv-custom')!.hidden = false;
      const local = (v: string) => {
        const ms = /^\d+$/.test(v) ? Number(v) : Date.parse(v);
        return new Date(ms - new Date(ms).getTimezoneOffset() * 60_000).toISOString().slice(0, 16);
      };
      el.querySelector<HTMLInputElement>('#fv-from')!.value = local(this.linked.from);
      el.querySelector<HTMLInputElement>('#fv-to')!.value = local(this.linked.to);
    }
    this.markRange();

    this.off = onLive((m) => {
      if (m.data.feeder !== this.id) return;
      if (m.type === 'result') {
        const r = m.data;
        if (r.window === 'frame' || r.window === 'basic' || r.window === '3s') this.showLatestSoon(r);
        if (r.window === '3s' && this.mode === 'live') {
          const t = Date.parse(r.ts);
          const pick: Record<string, number | null> = { vU2: r.v?.u2 ?? null, vU0: r.v?.u0 ?? null, iU2: r.i?.u2 ?? null, i1: r.i?.pos?.[0] ?? null };
          this.charts.forEach((c, k) => c.append(t, pick[this.specs[k]!.key] ?? null));
        }
      } else if (m.type === 'alarm') {
        this.alarms.push(m.data);
        this.renderAlarms();
      } else {
        this.events.push(m.data);
        this.renderEvents();
      }
    });

    const latest = await api.latest(this.id);
    this.showLatest(latest.result);
    await Promise.all([this.loadTrend(), this.loadHistory(), this.loadCompliance()]);
  }

  unmount(): void {
    this.off?.();
    for (const c of this.charts) c.destroy();
    this.charts = [];
    this.el = null;
  }

  private markRange(): void {
    this.el?.querySelectorAll<HTMLButtonElement>('[data-range]').forEach((b) => b.setAttribute('aria-pressed', String(b.dataset.range === this.mode)));
    // The live view follows the 3-s values as they close; the window applies to the other ranges.
    const pick = this.el?.querySelector<HTMLSelectElement>('#fv-win');
    if (pick) pick.disabled = this.mode === 'live';
  }

  private prefillCustom(): void {
    const local = (ms: number) => new Date(ms - new Date(ms).getTimezoneOffset() * 60_000).toISOString().slice(0, 16);
    const from = this.el!.querySelector<HTMLInputElement>('#fv-from')!;
    const to = this.el!.querySelector<HTMLInputElement>('#fv-to')!;
    if (from.value === '') from.value = local(Date.now() - 3 * 86_400_000);
    if (to.value === '') to.value = local(Date.now());
  }

  private rangeQuery(): string {
    const now = Date.now();
    const window = this.windowChoice === 'auto' ? '' : `&window=${this.windowChoice}`;
    switch (this.mode) {
      case 'live':
        return `from=${now - HOUR}&to=${now + 60_000}&window=3s`;
      case '24h':
        return `from=${now - 24 * HOUR}&to=${now}${window}`;
      case '7d':
        return `from=${now - 7 * 24 * HOUR}&to=${now}${window}`;
      case 'custom': {
        const from = Date.parse(this.el!.querySelector<HTMLInputElement>('#fv-from')!.value);
        const to = Date.parse(this.el!.querySelector<HTMLInputElement>('#fv-to')!.value);
        return `from=${Number.isFinite(from) ? from : now - 24 * HOUR}&to=${Number.isFinite(to) ? to : now}${window}`;
      }
    }
  }

  private async loadTrend(): Promise<void> {
    const seq = ++this.trendSeq;
    const q = this.rangeQuery();
    const csv = this.el?.querySelector<HTMLAnchorElement>('#fv-csv');
    if (csv) csv.href = withToken(`/api/feeders/${encodeURIComponent(this.id)}/trend.csv?${q}`);
    const windowLabel = this.el?.querySelector('#fv-window');
    let trend: Trend;
    try {
      // Only the charted columns: a 7-day 3-s trend is 201,600 rows.
      trend = await api.trend(this.id, `${q}&fields=${this.specs.map((x) => x.key).join(',')}`);
    } catch (e) {
      if (windowLabel) windowLabel.textContent = `trend unavailable: ${(e as Error).message}`;
      return;
    }
    if (seq !== this.trendSeq || this.el === null) return; // a newer range was picked meanwhile
    const ts = trend.columns.ts.map((t) => Date.parse(t));
    this.charts.forEach((c, k) => c.setData(ts, trend.columns[this.specs[k]!.key] ?? [], trend.window));
    if (windowLabel) windowLabel.textContent = trend.count === 0 ? 'no data in this range' : `${trend.count.toLocaleString()} values of ${trend.window}`;
    void this.loadBalance(this.mode === 'live' ? `from=${Date.now() - 24 * HOUR}` : q);
  }

  private async loadBalance(q: string): Promise<void> {
    const host = this.el?.querySelector('#fv-balance');
    if (!host) return;
    try {
      const b = await api.balance(this.id, q);
      if (b.samples === 0) {
        host.innerHTML = '<span class="muted">No per-phase currents in this range.</span>';
        return;
      }
      const rows = (['a', 'b', 'c'] as const)
        .map((p) => `<tr><td>${PHASE_LABEL[p]}${p === b.heaviest ? ' <span class="pill warning">heaviest</span>' : p === b.lightest ? ' <span class="pill">lightest</span>' : ''}</td><td class="num">${amps(b.phases[p].meanA)}</td><td class="num">${amps(b.phases[p].peakA)}</td></tr>`)
        .join('');
      host.innerHTML = `<table class="list"><thead><tr><th>Phase</th><th>Mean</th><th>Peak (${esc(b.window)})</th></tr></thead><tbody>${rows}</tbody></table>
        <dl class="kv"><dt>Spread heaviest − lightest</dt><dd>${amps(b.spreadA)}</dd><dt>Max deviation from average</dt><dd>${pct(b.maxDeviationPercent, 1)}</dd><dt>Current u2 mean / p95 / max</dt><dd>${pct(b.currentU2.mean, 1)} / ${pct(b.currentU2.p95, 1)} / ${pct(b.currentU2.max, 1)}</dd></dl>
        <p class="caution">${esc(b.caution)}</p>`;
    } catch (e) {
      host.textContent = `unavailable: ${(e as Error).message}`;
    }
  }

  private async loadCompliance(): Promise<void> {
    const host = this.el?.querySelector('#fv-compliance');
    if (!host) return;
    try {
      const c = await api.compliance(this.id);
      const verdict = c.verdict === 'no-data' ? '<span class="pill">no valid 10-min values</span>' : c.verdict === 'pass' ? '<span class="pill">✓ within limit</span>' : '<span class="pill alarm">✗ limit exceeded</span>';
      host.innerHTML = `<p>${verdict} ${c.fullPeriod ? '' : '<span class="muted">(range shorter than one week)</span>'}</p>
        <dl class="kv"><dt>Limit</dt><dd>95 % of values ≤ ${c.limitPercent} %</dd><dt>Values within limit</dt><dd>${c.fractionWithinLimit === null ? '–' : pct(100 * c.fractionWithinLimit, 1)}</dd>
        <dt>95th percentile / max</dt><dd>${pct(c.p95)} / ${pct(c.max)}</dd><dt>Valid / flagged / expected</dt><dd>${c.valid} / ${c.flagged} / ${c.expected}</dd></dl>
        <p class="muted">${esc(c.basis)}</p>`;
    } catch (e) {
      host.textContent = `unavailable: ${(e as Error).message}`;
    }
  }

  private async loadHistory(): Promise<void> {
    const q = `feeder=${encodeURIComponent(this.id)}`;
    const [a, ev] = await Promise.all([api.alarms(q), api.events(q)]);
    this.alarms = a.alarms;
    this.events = ev.events;
    this.renderAlarms();
    this.renderEvents();
  }

  private renderAlarms(): void {
    const host = this.el?.querySelector('#fv-alarms');
    if (!host) return;
    if (this.alarms.length === 0) {
      host.innerHTML = '<span class="muted">No alarm changes in the last 7 days.</span>';
      return;
    }
    host.innerHTML = `<table class="list"><thead><tr><th>Time</th><th>Condition</th><th>State</th><th>Message</th></tr></thead><tbody>${this.alarms
      .slice()
      .reverse()
      .slice(0, 200)
      .map((a) => `<tr class="${a.state}"><td class="num">${esc(clock(a.ts))}</td><td>${esc(CONDITION_LABEL[a.condition] ?? a.condition)}${a.phase ? ` · ${esc(PHASE_LABEL[a.phase] ?? a.phase)}` : ''}</td><td class="lvl-${a.state === 'raised' ? a.level : 'ok'}">${esc(a.state)} · ${esc(a.level)}</td><td>${esc(a.message)}${cautionOf(a) ? `<details class="row-caution"><summary>⚠ caution</summary>${esc(cautionOf(a))}</details>` : ''}</td></tr>`)
      .join('')}</tbody></table>`;
  }

  private renderEvents(): void {
    const host = this.el?.querySelector('#fv-events');
    if (!host) return;
    if (this.events.length === 0) {
      host.innerHTML = '<span class="muted">No classified disturbances in the last 7 days.</span>';
      return;
    }
    host.innerHTML = `<table class="list"><thead><tr><th>Time</th><th>Type</th><th>Peak</th><th>Message</th></tr></thead><tbody>${this.events
      .slice()
      .reverse()
      .slice(0, 200)
      .map((e) => `<tr><td class="num">${esc(clock(e.ts))}</td><td>${esc(e.type)}</td><td class="num">${amps(e.peakCurrent)} (${esc(e.peakPhase)})</td><td>${esc(e.message)}</td></tr>`)
      .join('')}</tbody></table>`;
  }

  private showLatestSoon(r: ResultWire): void {
    const first = this.latestPending === null;
    this.latestPending = r;
    if (!first) return;
    requestAnimationFrame(() => {
      const next = this.latestPending;
      this.latestPending = null;
      if (next !== null) this.showLatest(next);
    });
  }

  private showLatest(r: ResultWire | null): void {
    const el = this.el;
    if (el === null || this.info === null) return;
    const fresh = el.querySelector('#fv-fresh')!;
    fresh.textContent = r === null ? 'no data yet' : `latest ${clock(r.ts)} (${r.window})${r.freq === null ? '' : ` · ${r.freq.toFixed(3)} Hz`}${r.flagged ? ' · flagged' : ''}`;
    el.querySelector('#fv-phasor-v')!.innerHTML = phasorSvg('v', phasePhasors(r?.v ?? null), (x) => volts(x));
    el.querySelector('#fv-phasor-i')!.innerHTML = phasorSvg('i', phasePhasors(r?.i ?? null), (x) => amps(x));
    const l = this.info.limits;
    const factor = (name: string, x: number | null | undefined, lim: { warning: number; alarm: number; enabled: boolean }) => {
      const lv = levelOf(x, lim);
      return `<span class="pill ${lv === 'ok' ? '' : lv}">${name} <span class="num">${pct(x)}</span></span>`;
    };
    el.querySelector('#fv-seq')!.innerHTML = r === null
      ? '<div class="empty">No data yet: the first result appears here as soon as frames arrive.</div>'
      : `<h3 class="muted" style="margin:0 0 4px;font-size:13px">Voltage</h3><table class="seq-table">${seqRows(r.v, volts, 'v')}</table>
         <div class="factor">${factor('u2', r.v?.u2, l.voltageUnbalance)}${factor('u0', r.v?.u0, l.zeroSequenceVoltage)}</div>
         <h3 class="muted" style="margin:12px 0 4px;font-size:13px">Current</h3><table class="seq-table">${seqRows(r.i, amps, 'i')}</table>
         <div class="factor">${factor('u2', r.i?.u2, l.currentUnbalance)}${factor('u0', r.i?.u0, { enabled: false, warning: 0, alarm: 0 })}</div>`;
  }
}
