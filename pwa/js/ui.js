// Shared UI pieces: Preact + htm (one vendored module), routing, data hooks.
import { html, useState, useEffect, useRef, useCallback } from '/vendor/htm/standalone.module.js';
import { athletes, onChange, outboxBatch, rejectedList } from './db.js';

export { html, useState, useEffect, useRef, useCallback };

// ---- routing (history API) ----
const routeSubs = new Set();
// routes counts the moves to a new address (navigate, Back, Forward).
let routes = 0;
export const routeCount = () => routes;
addEventListener('popstate', () => { routes++; });
export function navigate(to, replace) {
  if (to === location.pathname + location.search) return;
  if (replace) history.replaceState(null, '', to);
  else history.pushState(null, '', to);
  routes++;
  routeSubs.forEach((fn) => fn());
  window.scrollTo(0, 0);
}
export function useRoute() {
  const [, set] = useState(0);
  const shown = location.pathname + location.search;
  useEffect(() => {
    const fn = () => set((x) => x + 1);
    routeSubs.add(fn);
    addEventListener('popstate', fn);
    // A move between the first render and this subscription is caught up.
    if (location.pathname + location.search !== shown) fn();
    return () => { routeSubs.delete(fn); removeEventListener('popstate', fn); };
  }, []);
  return { path: location.pathname.replace(/\/+$/, '') || '/', params: new URLSearchParams(location.search) };
}
export function Link({ to, children, ...rest }) {
  const click = (e) => {
    if (e.metaKey || e.ctrlKey || e.shiftKey || e.button !== 0) return;
    e.preventDefault();
    navigate(to);
  };
  return html`<a href=${to} onClick=${click} ...${rest}>${children}</a>`;
}

// ---- data hooks ----
// useVersion changes whenever the store changes (this page, another tab, a pull).
export function useVersion() {
  const [v, set] = useState(0);
  useEffect(() => onChange(() => set((x) => x + 1)), []);
  return v;
}

// useAsync runs fn whenever deps change and returns its latest result.
export function useAsync(fn, deps, initial) {
  const [value, set] = useState(initial);
  useEffect(() => {
    let live = true;
    fn().then((v) => { if (live) set(v); }, (e) => console.error(e));
    return () => { live = false; };
  }, deps);
  return value;
}

export function useAthletes() {
  const v = useVersion();
  return useAsync(athletes, [v], null);
}

// pendingIds: record ids with a mutation still waiting, and rejected ones.
export function usePending() {
  const v = useVersion();
  return useAsync(async () => {
    const rows = await outboxBatch(100000);
    const rej = await rejectedList();
    return { waiting: new Set(rows.map((r) => r.record.id)), rejected: new Map(rej.map((r) => [r.id, r])) };
  }, [v], { waiting: new Set(), rejected: new Map() });
}

// the athlete this device last picked
export function getPicked() { return localStorage.getItem('cb.athlete') || ''; }
export function setPicked(id) { localStorage.setItem('cb.athlete', id); }

// ---- small controls ----
export function Choice({ value, current, onPick, testid, children, label }) {
  return html`<button type="button" class="choice" aria-pressed=${current === value ? 'true' : 'false'}
    data-testid=${testid} aria-label=${label} onClick=${() => onPick(value)}>${children}</button>`;
}

export function AthleteSelect({ list, value, onChange: change }) {
  if (!list) return html`<p class="muted">Loading athletes…</p>`;
  if (!list.length) return html`<${NoAthletes} />`;
  return html`<label for="athlete-select">Athlete</label>
    <select id="athlete-select" data-testid="athlete-select" value=${value} onChange=${(e) => change(e.target.value)}>
      <option value="">Choose…</option>
      ${list.map((a) => html`<option value=${a.id}>${a.name}</option>`)}
    </select>`;
}

export function NoAthletes() {
  return html`<div class="card" data-testid="no-athletes"><p><strong>No athletes on this device yet.</strong></p>
    <p class="muted">The camp's athletes arrive from the hub the first time this device syncs on the camp Wi-Fi.</p></div>`;
}

// useAthlete: the chosen athlete (from ?athlete=, the edited record, or the last pick).
export function useAthlete(list, initial) {
  const [id, setId] = useState(initial || new URLSearchParams(location.search).get('athlete') || getPicked());
  useEffect(() => { if (initial) setId(initial); }, [initial]);
  const pick = (x) => { setId(x); if (x) setPicked(x); };
  const athlete = list ? list.find((a) => a.id === id) : null;
  return [athlete, pick, id];
}

// savedState is the state after a save's transaction completed; each one
// carries a new sequence number so a repeated message is still news.
let saveSeq = 0;
export function savedState(text) { return { saved: text, seq: ++saveSeq }; }

// SaveLine shows the outcome of a save: only after the transaction completed.
export function SaveLine({ state }) {
  if (!state) return null;
  if (state.error) return html`<p class="error" role="alert" data-testid="save-error">${state.error}</p>`;
  if (state.saved) return html`<p class="saved" role="status" data-testid="saved" data-seq=${state.seq}>${state.saved}</p>`;
  return null;
}

// thisDevice names what the person holds, for "Saved on this phone" and
// the like: a laptop (the hub, a fine pointer), a phone or a tablet.
export function thisDevice() {
  const coarse = typeof matchMedia === 'function' && matchMedia('(pointer: coarse)').matches;
  if (!coarse) return 'laptop';
  return Math.min(screen.width, screen.height) < 600 ? 'phone' : 'tablet';
}
export const savedHere = () => `Saved on this ${thisDevice()}`;

export function fmt(x, d = 1) {
  return Number.isFinite(x) ? x.toFixed(d) : '–';
}

export function plural(n, one, many) {
  return `${n} ${n === 1 ? one : many}`;
}
