// The round clock: round and rest lengths (kept in localStorage), large
// digits, start / pause / reset, the round number, the bell at each round's
// start and end and a warning 10 s before the end. The clock lives in this
// module, not in the screen, so it keeps time (and rings) while the coach
// opens another screen and comes back.
import { html, useState, useEffect } from '../ui.js';
import { ring, unlock, rung } from './bell.js';
import './style.js';

const KEY = 'cb.ringside.clock';
export const PRESETS = [[180, 60], [120, 60], [180, 30], [120, 30]];
export const WARN_S = 10;
const LIMITS = { round_s: [5, 900], rest_s: [0, 600] };

export function loadLengths() {
  try {
    const v = JSON.parse(localStorage.getItem(KEY) || 'null');
    if (v && okLen('round_s', v.round_s) && okLen('rest_s', v.rest_s)) return { round_s: v.round_s, rest_s: v.rest_s };
  } catch (_) { /* unreadable: defaults */ }
  return { round_s: 180, rest_s: 60 };
}
function okLen(k, x) { return Number.isInteger(x) && x >= LIMITS[k][0] && x <= LIMITS[k][1]; }

// mmss: 185 → "3:05".
export function mmss(s) {
  const t = Math.max(0, Math.ceil(s));
  return `${Math.floor(t / 60)}:${String(t % 60).padStart(2, '0')}`;
}

// ---- the clock's state machine (one per page) ----
const c = {
  ...loadLengths(),
  phase: 'ready', // ready | round | rest
  running: false,
  round: 0,
  endsAt: 0, // ms, while running
  left: 0, // ms, while paused
  warned: false,
  ended: 0, // the round that last ended on the clock and is not logged yet
  said: '', // the last phase change, in words, for screen readers
};
c.left = c.round_s * 1000;
const subs = new Set();
let timer = null;
let lock = null;

function publish() { const s = { ...c }; subs.forEach((fn) => fn(s)); }

function remaining(now = Date.now()) { return c.running ? c.endsAt - now : c.left; }

function step() {
  const now = Date.now();
  let left = c.endsAt - now;
  // Catch up over every boundary passed (a phone that slept a while).
  for (let guard = 0; left <= 0 && guard < 1000; guard++) {
    if (c.phase === 'round') {
      ring('end');
      c.ended = c.round;
      c.said = `Round ${c.round} over${c.rest_s ? `, rest ${mmss(c.rest_s)}` : ''}`;
      if (c.rest_s > 0) { c.phase = 'rest'; c.endsAt += c.rest_s * 1000; } else { c.round++; c.endsAt += c.round_s * 1000; ring('start'); }
    } else {
      c.phase = 'round';
      c.round++;
      c.endsAt += c.round_s * 1000;
      c.said = `Round ${c.round}`;
      ring('start');
    }
    c.warned = false;
    left = c.endsAt - now;
  }
  const len = (c.phase === 'round' ? c.round_s : c.rest_s);
  if (!c.warned && len > WARN_S && left <= WARN_S * 1000) {
    c.warned = true;
    ring('warn');
    c.said = c.phase === 'round' ? `10 seconds left in round ${c.round}` : '10 seconds to the next round';
  }
  publish();
}

async function keepAwake(on) {
  try {
    if (on && !lock && navigator.wakeLock) lock = await navigator.wakeLock.request('screen');
    if (!on && lock) { await lock.release(); lock = null; }
  } catch (_) { lock = null; }
}

export function start() {
  unlock();
  if (c.running) return;
  const now = Date.now();
  if (c.phase === 'ready') {
    c.phase = 'round';
    c.round = 1;
    c.left = c.round_s * 1000;
    c.warned = false;
    c.said = 'Round 1';
    ring('start');
  }
  c.running = true;
  c.endsAt = now + c.left;
  clearInterval(timer);
  timer = setInterval(step, 200);
  keepAwake(true);
  step();
}

export function pause() {
  if (!c.running) return;
  c.left = Math.max(0, c.endsAt - Date.now());
  c.running = false;
  clearInterval(timer);
  keepAwake(false);
  c.said = 'Paused';
  publish();
}

export function reset() {
  clearInterval(timer);
  keepAwake(false);
  Object.assign(c, { phase: 'ready', running: false, round: 0, left: c.round_s * 1000, warned: false, ended: 0, said: 'Clock reset' });
  publish();
}

export function clearEnded() { c.ended = 0; publish(); }

// setLengths changes the lengths; a running phase keeps its own end.
export function setLengths(round_s, rest_s) {
  if (!okLen('round_s', round_s) || !okLen('rest_s', rest_s)) return false;
  c.round_s = round_s;
  c.rest_s = rest_s;
  if (c.phase === 'ready') c.left = round_s * 1000;
  try { localStorage.setItem(KEY, JSON.stringify({ round_s, rest_s })); } catch (_) { /* not kept */ }
  publish();
  return true;
}

export function useClock() {
  const [s, set] = useState({ ...c });
  useEffect(() => { subs.add(set); set({ ...c }); return () => subs.delete(set); }, []);
  return s;
}

// ---- the component ----
// RoundClock: onLog() logs the round that just ended for the chosen
// athletes (through the screen's own path); names are the chosen athletes;
// onLength(seconds) tells the screen the round length to record.
export function RoundClock({ onLog, names, onLength }) {
  const s = useClock();
  const [open, setOpen] = useState(false);
  const [draft, setDraft] = useState(null);
  useEffect(() => { if (onLength && s.round_s >= 10 && s.round_s <= 600) onLength(s.round_s); }, [s.round_s]);
  const left = remaining() / 1000;
  const lastTen = s.running && s.phase !== 'ready' && left <= WARN_S;
  const label = s.phase === 'ready' ? 'Ready' : s.phase === 'round' ? `Round ${s.round}` : `Rest · next round ${s.round + 1}`;
  const d = draft || { round_s: String(s.round_s), rest_s: String(s.rest_s) };
  const typed = (k, v) => {
    const nd = { ...d, [k]: v };
    setDraft(nd);
    const r = Number(nd.round_s), p = Number(nd.rest_s);
    setLengths(r, p);
  };
  const bad = (k) => !okLen(k, Number(d[k]));
  const log = () => { if (onLog) onLog(); if (names && names.length) clearEnded(); };

  return html`<div class="rs-clock" data-testid="clock" data-phase=${s.phase} data-round=${s.round} data-running=${String(s.running)}
      data-left=${Math.ceil(left)} data-sound=${rung.last} data-sounds=${rung.count} data-warn=${String(lastTen)}>
    <div class="rs-clock-head">
      <span class="rs-phase" data-testid="clock-phase">${label}</span>
      <span class="rs-lengths muted">${mmss(s.round_s)} round · ${mmss(s.rest_s)} rest</span>
    </div>
    <div class="rs-digits num" data-testid="clock-time" aria-label=${`${label}: ${mmss(left)} left`}>${mmss(left)}</div>
    <p class="rs-sr" role="status" aria-live="assertive" data-testid="clock-said">${s.said}</p>
    <div class="rs-clock-buttons">
      ${s.running
        ? html`<button type="button" class="rs-go rs-pause" data-testid="clock-pause" onClick=${pause}>Pause</button>`
        : html`<button type="button" class="rs-go" data-testid="clock-start" onClick=${start}>${s.phase === 'ready' ? 'Start' : 'Resume'}</button>`}
      <button type="button" class="secondary rs-reset" data-testid="clock-reset" onClick=${reset} disabled=${s.phase === 'ready' && !s.running}>Reset</button>
    </div>
    ${s.ended > 0 && html`<div class="rs-offer" data-testid="clock-offer">
      <button type="button" class="primary rs-log" data-testid="clock-log" onClick=${log}>
        Log round ${s.ended}${names && names.length ? html` <span class="rs-who">for ${names.join(', ')}</span>` : ''}</button>
      ${!(names && names.length) && html`<p class="muted small">Tap the athletes who boxed it first.</p>`}
      <button type="button" class="secondary" data-testid="clock-offer-dismiss" onClick=${clearEnded}>Not this one</button>
    </div>`}
    <button type="button" class="secondary rs-settings-toggle" data-testid="clock-settings" aria-expanded=${open ? 'true' : 'false'}
      onClick=${() => { setOpen(!open); setDraft(null); }}>${open ? 'Close clock settings' : 'Clock settings'}</button>
    ${open && html`<div class="rs-settings card" data-testid="clock-settings-panel">
      <div class="row" role="group" aria-label="Round and rest">
        ${PRESETS.map(([r, p]) => html`<button type="button" class="choice" data-testid=${`clock-preset-${r}-${p}`}
          aria-pressed=${s.round_s === r && s.rest_s === p ? 'true' : 'false'} onClick=${() => { setLengths(r, p); setDraft(null); }}>${mmss(r)} / ${mmss(p)}</button>`)}
      </div>
      <div class="rs-two">
        <div><label for="clock-round-s">Round, seconds</label>
          <input id="clock-round-s" data-testid="clock-round-s" inputmode="numeric" autocomplete="off" value=${d.round_s}
            aria-invalid=${bad('round_s') ? 'true' : 'false'} onInput=${(e) => typed('round_s', e.target.value)} /></div>
        <div><label for="clock-rest-s">Rest, seconds</label>
          <input id="clock-rest-s" data-testid="clock-rest-s" inputmode="numeric" autocomplete="off" value=${d.rest_s}
            aria-invalid=${bad('rest_s') ? 'true' : 'false'} onInput=${(e) => typed('rest_s', e.target.value)} /></div>
      </div>
      ${(bad('round_s') || bad('rest_s')) && html`<p class="error" data-testid="clock-settings-error">Round 5–900 s, rest 0–600 s, whole seconds.</p>`}
      <button type="button" class="secondary" data-testid="clock-test-bell" onClick=${() => { unlock(); ring('end'); }}>Test the bell</button>
      <p class="muted small">The bell rings at the start and end of each round and pips 10 s before the end. Turn the phone's volume up; the screen stays on while the clock runs.</p>
    </div>`}
  </div>`;
}
