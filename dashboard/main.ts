/**
 * Dashboard entry: the top bar (theme, phase palette, live link state, demo
 * badge, active alarm count), hash routing between the views, the source
 * health banner and alarm toasts.
 */
import { UnauthorizedError, api, setToken } from './api.js';
import { esc } from './dom.js';
import { CONDITION_LABEL } from './format.js';
import { connectLive, onLinkState, onLive } from './live.js';
import { currentPalette, currentTheme, setPalette, setTheme, type Palette } from './theme.js';
import type { View } from './view.js';
import { AlarmsView } from './views/alarms.js';
import { FeederView } from './views/feeder.js';
import { OverviewView } from './views/overview.js';

const main = document.getElementById('view')!;
let current: View | null = null;
const activeAlarms = new Map<string, true>();

function route(): View {
  const hash = location.hash.replace(/^#/, '');
  const feeder = /^\/feeder\/([^?]+)(?:\?(.*))?$/.exec(hash);
  if (feeder !== null) {
    // A deep link may name a range: #/feeder/F1?from=...&to=...&window=3s
    const q = new URLSearchParams(feeder[2] ?? '');
    const from = q.get('from'), to = q.get('to');
    const range = from !== null && to !== null ? { from, to, window: q.get('window') } : null;
    return new FeederView(decodeURIComponent(feeder[1]!), range);
  }
  if (hash === '/alarms') return new AlarmsView();
  return new OverviewView();
}

function markNav(): void {
  const name = location.hash.startsWith('#/alarms') ? 'alarms' : location.hash.startsWith('#/feeder') ? '' : 'overview';
  document.querySelectorAll<HTMLAnchorElement>('[data-nav]').forEach((a) => {
    if (a.dataset.nav === name) a.setAttribute('aria-current', 'page');
    else a.removeAttribute('aria-current');
  });
}

function showTokenForm(): void {
  main.innerHTML = `<form class="token-form panel" id="token-form"><h1>Access token needed</h1>
    <p class="muted">This seqmon server requires an access token for its API. It is kept for this browser tab only.</p>
    <input type="password" id="token-input" autocomplete="off" placeholder="token" required><button type="submit">Continue</button></form>`;
  document.getElementById('token-form')!.addEventListener('submit', (ev) => {
    ev.preventDefault();
    setToken((document.getElementById('token-input') as HTMLInputElement).value);
    connectLive();
    void show();
    void refreshStatus();
  });
}

async function show(): Promise<void> {
  current?.unmount();
  markNav();
  const view = route();
  current = view;
  main.innerHTML = '';
  try {
    await view.mount(main);
  } catch (e) {
    if (current !== view) return;
    if (e instanceof UnauthorizedError) showTokenForm();
    else main.innerHTML = `<div class="empty">Could not load this view: ${esc((e as Error).message)}</div>`;
  }
}

function updateAlarmCount(): void {
  const el = document.getElementById('alarm-count')!;
  el.hidden = activeAlarms.size === 0;
  el.textContent = String(activeAlarms.size);
}

function toast(html: string, cleared: boolean): void {
  const host = document.getElementById('toasts')!;
  const t = document.createElement('div');
  t.className = `toast${cleared ? ' cleared' : ''}`;
  t.innerHTML = html;
  host.append(t);
  setTimeout(() => t.remove(), 8_000);
  while (host.children.length > 4) host.firstElementChild?.remove();
}

async function refreshStatus(): Promise<void> {
  const banner = document.getElementById('source-banner')!;
  try {
    const h = await api.health();
    document.getElementById('demo-badge')!.hidden = h.demo !== true;
    const down = (h.sources ?? []).filter((s) => s.state !== 'connected');
    const problems = down.map((s) => `Source “${esc(s.name)}” is ${esc(s.state)} since ${esc(new Date(s.since).toLocaleTimeString())}${s.lastError ? ` (${esc(s.lastError)})` : ''}: data may be missing or stale.`);
    if (h.store !== undefined && !h.store.ok) problems.push(`Trend store (${esc(h.store.kind)}) reports a problem${h.store.detail ? `: ${esc(h.store.detail)}` : ''}.`);
    banner.hidden = problems.length === 0;
    banner.innerHTML = problems.join('<br>');
    banner.dataset.state = problems.length === 0 ? 'ok' : 'degraded';
  } catch {
    banner.hidden = false;
    banner.dataset.state = 'unreachable';
    banner.textContent = 'The seqmon server does not answer; retrying.';
  }
}

async function loadActiveAlarms(): Promise<void> {
  try {
    const r = await api.alarms('active=true');
    activeAlarms.clear();
    for (const a of r.alarms) activeAlarms.set(`${a.feeder}/${a.condition}`, true);
    updateAlarmCount();
  } catch {
    // the token form or the banner tells the story
  }
}

function initTopBar(): void {
  const toggle = document.getElementById('theme-toggle')!;
  const label = () => toggle.setAttribute('title', currentTheme() === 'dark' ? 'Switch to light theme' : 'Switch to dark theme');
  label();
  toggle.addEventListener('click', () => {
    setTheme(currentTheme() === 'dark' ? 'light' : 'dark');
    label();
  });
  const palette = document.getElementById('palette-select') as HTMLSelectElement;
  palette.value = currentPalette();
  palette.addEventListener('change', () => setPalette(palette.value as Palette));
  const link = document.getElementById('link-state')!;
  onLinkState((s) => {
    link.dataset.state = s;
    link.textContent = s === 'live' ? 'live' : s === 'down' ? 'stream down' : 'connecting';
  });
  onLive((m) => {
    if (m.type !== 'alarm') return;
    const a = m.data;
    const key = `${a.feeder}/${a.condition}`;
    if (a.state === 'raised') activeAlarms.set(key, true);
    else activeAlarms.delete(key);
    updateAlarmCount();
    toast(`<strong>${esc(a.feeder)}</strong> · ${esc(CONDITION_LABEL[a.condition] ?? a.condition)} ${esc(a.state)}<div class="muted">${esc(a.message)}</div>`, a.state === 'cleared');
  });
}

const fromHash = /[#&]token=([^&]+)/.exec(location.hash);
if (fromHash !== null) {
  setToken(decodeURIComponent(fromHash[1]!));
  history.replaceState(null, '', location.pathname + location.hash.replace(/[#&]token=[^&]+/, '').replace(/^$/, '#/'));
}
initTopBar();
connectLive();
window.addEventListener('hashchange', () => void show());
void show();
void refreshStatus();
void loadActiveAlarms();
setInterval(() => void refreshStatus(), 15_000);
