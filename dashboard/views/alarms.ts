/** Alarms: the active ones and the history of a range, filterable, with messages and cautions; live updates. */
import type { AlarmWire } from '../api.js';
import { api } from '../api.js';
import { esc } from '../dom.js';
import { CONDITION_LABEL, cautionOf, PHASE_LABEL, SWITCHING_NOTE, clock } from '../format.js';
import { onLive } from '../live.js';
import type { View } from '../view.js';

const SPANS: Record<string, number> = { '24h': 86_400_000, '7d': 7 * 86_400_000, '30d': 30 * 86_400_000 };

export class AlarmsView implements View {
  private el: HTMLElement | null = null;
  private active: AlarmWire[] = [];
  private history: AlarmWire[] = [];
  private off: (() => void) | null = null;

  async mount(el: HTMLElement): Promise<void> {
    this.el = el;
    el.innerHTML = `
      <div class="toolbar">
        <h1>Alarms</h1><span class="grow"></span>
        <label>Feeder <select id="al-feeder"><option value="">all</option></select></label>
        <label>Condition <select id="al-condition"><option value="">all</option>${Object.entries(CONDITION_LABEL).map(([k, v]) => `<option value="${k}">${esc(v)}</option>`).join('')}</select></label>
        <label>Level <select id="al-level"><option value="">all</option><option value="alarm">alarm</option><option value="warning">warning</option></select></label>
        <label>History <select id="al-span"><option value="24h">24 h</option><option value="7d" selected>7 days</option><option value="30d">30 days</option></select></label>
      </div>
      <p class="caution">${esc(SWITCHING_NOTE)}</p>
      <section class="panel" style="margin-bottom:14px"><h2>Active</h2><div id="al-active"></div></section>
      <section class="panel"><h2>History</h2><div id="al-history"></div></section>`;
    for (const id of ['al-feeder', 'al-condition', 'al-level']) el.querySelector(`#${id}`)!.addEventListener('change', () => this.render());
    el.querySelector('#al-span')!.addEventListener('change', () => void this.loadHistory());
    this.off = onLive((m) => {
      if (m.type !== 'alarm') return;
      const a = m.data;
      this.active = this.active.filter((x) => !(x.feeder === a.feeder && x.condition === a.condition));
      if (a.state === 'raised') this.active.push(a);
      this.history.push(a);
      this.render();
    });
    const [{ feeders }, active] = await Promise.all([api.feeders(), api.alarms('active=true')]);
    const sel = el.querySelector<HTMLSelectElement>('#al-feeder')!;
    sel.insertAdjacentHTML('beforeend', feeders.map((f) => `<option value="${esc(f.id)}">${esc(f.id)}</option>`).join(''));
    this.active = active.alarms;
    await this.loadHistory();
  }

  unmount(): void {
    this.off?.();
    this.el = null;
  }

  private async loadHistory(): Promise<void> {
    const span = SPANS[this.el?.querySelector<HTMLSelectElement>('#al-span')?.value ?? '7d'] ?? SPANS['7d']!;
    const r = await api.alarms(`from=${Date.now() - span}`);
    this.history = r.alarms;
    this.render();
  }

  private filtered(list: AlarmWire[]): AlarmWire[] {
    const v = (id: string) => this.el?.querySelector<HTMLSelectElement>(`#${id}`)?.value ?? '';
    const feeder = v('al-feeder'), condition = v('al-condition'), level = v('al-level');
    return list.filter((a) => (feeder === '' || a.feeder === feeder) && (condition === '' || a.condition === condition) && (level === '' || a.level === level));
  }

  private table(list: AlarmWire[], empty: string): string {
    if (list.length === 0) return `<span class="muted">${empty}</span>`;
    return `<table class="list"><thead><tr><th>Time</th><th>Feeder</th><th>Condition</th><th>State</th><th>Value / limit</th><th>Message</th></tr></thead><tbody>${list
      .slice()
      .reverse()
      .slice(0, 500)
      .map((a) => `<tr class="${a.state}" data-feeder="${esc(a.feeder)}" data-condition="${esc(a.condition)}"><td class="num">${esc(clock(a.ts))}</td><td><a href="#/feeder/${encodeURIComponent(a.feeder)}">${esc(a.feeder)}</a></td><td>${esc(CONDITION_LABEL[a.condition] ?? a.condition)}${a.phase ? ` · ${esc(PHASE_LABEL[a.phase] ?? a.phase)}` : ''}</td><td class="lvl-${a.state === 'raised' ? a.level : 'ok'}">${a.level === 'alarm' ? '◆' : '▲'} ${esc(a.state)} · ${esc(a.level)}</td><td class="num">${a.value === null ? '–' : esc(a.value.toFixed(2))} / ${a.limit === null ? '–' : esc(String(a.limit))}</td><td>${esc(a.message)}${cautionOf(a) ? `<details class="row-caution"><summary>⚠ caution</summary>${esc(cautionOf(a))}</details>` : ''}</td></tr>`)
      .join('')}</tbody></table>`;
  }

  private render(): void {
    if (this.el === null) return;
    this.el.querySelector('#al-active')!.innerHTML = this.table(this.filtered(this.active), 'No active alarms.');
    this.el.querySelector('#al-history')!.innerHTML = this.table(this.filtered(this.history), 'No alarm changes in this range.');
  }
}
