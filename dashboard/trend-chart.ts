/**
 * One trend chart (uPlot) of one quantity, with the warning and alarm limits
 * drawn as labelled horizontal lines. Data attributes on the container
 * (data-window, data-points, data-from, data-to) say what is shown.
 */
import uPlot from 'uplot';
import type { LimitPair } from './api.js';
import { cssVar, onThemeChange } from './theme.js';

export interface ChartSpec {
  key: string;
  title: string;
  unit: string;
  limits: LimitPair | null;
  digits: number;
}

/** Live mode keeps at most this many points per chart (one hour of 3-s values plus margin). */
const LIVE_MAX_POINTS = 1_500;

export class TrendChart {
  private plot: uPlot | null = null;
  private xs: number[] = [];
  private ys: (number | null)[] = [];
  private readonly observer: ResizeObserver;
  private readonly unTheme: () => void;

  constructor(
    private readonly host: HTMLElement,
    private readonly spec: ChartSpec,
  ) {
    this.observer = new ResizeObserver(() => this.resize());
    this.observer.observe(host);
    this.unTheme = onThemeChange(() => this.rebuild());
  }

  setData(tsMs: readonly number[], values: readonly (number | null)[], window: string): void {
    this.xs = tsMs.map((t) => t / 1000);
    this.ys = values.slice();
    this.host.dataset.window = window;
    this.rebuild();
  }

  /** Adds one live point (3-s aggregate) at the right, dropping the oldest beyond the live bound. */
  append(tsMs: number, value: number | null): void {
    const x = tsMs / 1000;
    if (this.xs.length > 0 && x <= this.xs[this.xs.length - 1]!) return;
    this.xs.push(x);
    this.ys.push(value);
    if (this.xs.length > LIVE_MAX_POINTS) {
      this.xs.splice(0, this.xs.length - LIVE_MAX_POINTS);
      this.ys.splice(0, this.ys.length - LIVE_MAX_POINTS);
    }
    this.markData();
    this.plot?.setData([this.xs, this.ys] as uPlot.AlignedData);
  }

  destroy(): void {
    this.observer.disconnect();
    this.unTheme();
    this.plot?.destroy();
    this.plot = null;
  }

  private markData(): void {
    this.host.dataset.points = String(this.xs.length);
    this.host.dataset.from = this.xs.length > 0 ? new Date(this.xs[0]! * 1000).toISOString() : '';
    this.host.dataset.to = this.xs.length > 0 ? new Date(this.xs[this.xs.length - 1]! * 1000).toISOString() : '';
  }

  private size(): { width: number; height: number } {
    return { width: Math.max(240, this.host.clientWidth - 4), height: 190 };
  }

  private resize(): void {
    if (this.plot === null) return;
    const { width, height } = this.size();
    if (Math.abs(this.plot.width - width) > 2) this.plot.setSize({ width, height });
  }

  private rebuild(): void {
    this.plot?.destroy();
    this.markData();
    const ink = cssVar('--ink-2');
    const grid = cssVar('--grid');
    const line = cssVar('--accent');
    const warn = cssVar('--warn');
    const alarm = cssVar('--alarm');
    const limits = this.spec.limits !== null && this.spec.limits.enabled ? this.spec.limits : null;
    const digits = this.spec.digits;
    const unit = this.spec.unit;
    const axis = { stroke: ink, grid: { stroke: grid, width: 1 }, ticks: { stroke: grid, width: 1 } };
    const opts: uPlot.Options = {
      ...this.size(),
      title: this.spec.title,
      cursor: { drag: { x: true, y: false } },
      scales: {
        x: { time: true },
        y: {
          range: (_u, min, max) => {
            const top = Math.max(max ?? 0, limits !== null ? limits.alarm * 1.15 : 0);
            const lo = Math.min(0, min ?? 0);
            return [lo, top > lo ? top : lo + 1];
          },
        },
      },
      axes: [axis, { ...axis, size: 56, values: (_u, vals) => vals.map((v) => (v === null ? '' : `${v.toFixed(digits > 1 ? 1 : digits)}`)) }],
      series: [
        {},
        {
          label: `${this.spec.title} (${unit})`,
          stroke: line,
          width: 1.5,
          spanGaps: false,
          points: { show: false },
          value: (_u, v) => (v === null ? '–' : `${v.toFixed(digits)} ${unit}`),
        },
      ],
      hooks: {
        draw: [
          (u) => {
            if (limits === null) return;
            const ctx = u.ctx;
            ctx.save();
            ctx.setLineDash([6 * devicePixelRatio, 4 * devicePixelRatio]);
            ctx.lineWidth = 1.5 * devicePixelRatio;
            ctx.font = `${11 * devicePixelRatio}px system-ui, sans-serif`;
            // uPlot leaves the context right-aligned after drawing the y axis.
            ctx.textAlign = 'left';
            ctx.textBaseline = 'bottom';
            for (const [value, colour, name] of [[limits.warning, warn, 'warning'], [limits.alarm, alarm, 'alarm']] as const) {
              const y = Math.round(u.valToPos(value, 'y', true));
              ctx.strokeStyle = colour;
              ctx.fillStyle = colour;
              ctx.beginPath();
              ctx.moveTo(u.bbox.left, y);
              ctx.lineTo(u.bbox.left + u.bbox.width, y);
              ctx.stroke();
              ctx.fillText(`${name} ${value} ${unit}`, u.bbox.left + 6 * devicePixelRatio, y - 4 * devicePixelRatio);
            }
            ctx.restore();
          },
        ],
      },
    };
    this.host.replaceChildren();
    this.plot = new uPlot(opts, [this.xs, this.ys] as uPlot.AlignedData, this.host);
    this.host.dataset.limits = limits === null ? '' : `${limits.warning},${limits.alarm}`;
  }
}
