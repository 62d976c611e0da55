// The coach's screens, loaded on first use so the app shell a phone
// opens at 7 a.m. does not parse them.
import { html, useState, useEffect } from '../ui.js';

const loaded = {};

function lazy(load, name) {
  return function Lazy(props) {
    const [C, setC] = useState(() => loaded[name]);
    const [err, setErr] = useState('');
    useEffect(() => {
      if (C) return;
      load().then((m) => { loaded[name] = m[name]; setC(() => m[name]); }, (e) => setErr(e.message || String(e)));
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
};
