// The coach's screens (and camp set-up), loaded on first use so the app shell a phone
// opens at 7 a.m. does not parse them.
import { html, useState, useEffect } from '../ui.js';

const loaded = {};
const loaders = [];

// warmAll fetches every coach screen once one has opened: a phone that
// never opens them never downloads them, and a coach's device, which
// opens them with the hub at hand, has them all for when it is not.
let warmed = false;
function warmAll() {
  if (warmed) return;
  warmed = true;
  // Loaded before the service worker controlled the page, they are in
  // the browser's HTTP cache: the worker then takes them from there.
  const go = () => Promise.allSettled(loaders.map((load) => load()))
    .then(() => ('serviceWorker' in navigator ? navigator.serviceWorker.ready : null))
    .then((reg) => reg && reg.active && reg.active.postMessage({ type: 'ADOPT_LAZY' }))
    .catch(() => {});
  if (typeof requestIdleCallback === 'function') requestIdleCallback(go, { timeout: 5000 });
  else setTimeout(go, 1000);
}

function lazy(load, name) {
  loaders.push(load);
  return function Lazy(props) {
    const [C, setC] = useState(() => loaded[name]);
    const [err, setErr] = useState('');
    useEffect(() => {
      if (C) return;
      load().then((m) => { loaded[name] = m[name]; setC(() => m[name]); warmAll(); }, (e) => setErr(e.message || String(e)));
    }, []);
    if (err) return html`<p class="error" role="alert">This screen could not be opened: ${err}</p>`;
    return C ? html`<${C} ...${props} />` : html`<p class="muted" data-testid="coach-loading">Opening…</p>`;
  };
}

export const COACH_ROUTES = {
  '/review': lazy(() => import('./review.js'), 'Review'),
  '/athlete': lazy(() => import('./athlete.js'), 'AthletePage'),
  '/plan': lazy(() => import('./plan.js'), 'Plan'),
  '/sheet': lazy(() => import('./sheet.js'), 'Sheet'),
  '/tests': lazy(() => import('./tests.js'), 'Tests'),
  '/intervals': lazy(() => import('./intervals.js'), 'Intervals'),
  '/fightweek': lazy(() => import('./fightweek.js'), 'FightWeek'),
  // Camp set-up (athletes, their names and units) is the coach's alone.
  '/camp': lazy(() => import('../camp.js'), 'Camp'),
  '/decision': lazy(() => import('./decision.js'), 'Decision'),
  '/thresholds': lazy(() => import('./thresholds.js'), 'Thresholds'),
  '/camps': lazy(() => import('./camps.js'), 'Camps'),
};
