// App entry: router, status bar, service-worker registration and update.
import { html, render } from '/vendor/htm/standalone.module.js';
import { useState, useEffect, useRef, useRoute, routeCount, Link, navigate, plural, thisDevice } from './ui.js';
import { onStatus, startSync } from './sync.js';
import { deviceId, getMeta } from './db.js';
import { setClockOffset } from './record.js';
import { Home, Checkin, Session, Incident, Clearance } from './screens.js';
import { Jumps, Rounds } from './ring.js';
import { Today } from './today.js';
import { Settings } from './settings.js';
import { Join } from './join.js';
import { COACH_ROUTES } from './coach/routes.js';
import { RTS } from './rts.js';
import { Note } from './note.js';

const ROUTES = {
  '/': Home, '/checkin': Checkin, '/jumps': Jumps, '/rounds': Rounds,
  '/session': Session, '/incident': Incident, '/clearance': Clearance, '/today': Today, '/settings': Settings, '/join': Join,
  ...COACH_ROUTES,
  '/rts': RTS,
  '/note': Note,
};

// ---- service worker: register, detect a waiting update, reload once ----
const sw = { waiting: null, build: '', subs: new Set() };
function swPublish() { sw.subs.forEach((fn) => fn({ waiting: sw.waiting, build: sw.build })); }
let userAskedReload = false;

async function setupSW() {
  if (!('serviceWorker' in navigator)) return;
  navigator.serviceWorker.addEventListener('controllerchange', () => {
    // Reload only when the user tapped "Update": the first install's claim also fires this.
    if (userAskedReload) { userAskedReload = false; location.reload(); }
  });
  navigator.serviceWorker.addEventListener('message', (e) => {
    if (e.data && e.data.type === 'BUILD') { sw.build = e.data.build; swPublish(); }
  });
  try {
    // sw.js itself always skips the HTTP cache (an update check sees each
    // new build); the modules it imports go through it, so installing the
    // worker revalidates what the page already loaded instead of
    // downloading it again. Every file is served no-cache with an ETag.
    const reg = await navigator.serviceWorker.register('/sw.js', { type: 'module', scope: '/', updateViaCache: 'imports' });
    const watch = (w) => {
      if (!w) return;
      w.addEventListener('statechange', () => {
        if (w.state === 'installed' && navigator.serviceWorker.controller) { sw.waiting = w; swPublish(); }
      });
    };
    if (reg.waiting && navigator.serviceWorker.controller) { sw.waiting = reg.waiting; swPublish(); }
    reg.addEventListener('updatefound', () => watch(reg.installing));
    document.addEventListener('visibilitychange', () => { if (document.visibilityState === 'visible') reg.update().catch(() => {}); });
    setInterval(() => reg.update().catch(() => {}), 30 * 60 * 1000);
    const ready = await navigator.serviceWorker.ready;
    (navigator.serviceWorker.controller || ready.active)?.postMessage({ type: 'BUILD' });
    // A coach's or staff device keeps the coach-only screens for offline use.
    const role = await getMeta('role');
    if (role === 'coach' || role === 'staff') ready.active?.postMessage({ type: 'WARM' });
  } catch (e) {
    console.warn('service worker not registered', e);
  }
}

function applyUpdate() {
  if (!sw.waiting) return;
  userAskedReload = true;
  sw.waiting.postMessage({ type: 'SKIP_WAITING' });
}

// ---- status bar: every state in plain words ----
function ago(ms) {
  const s = Math.max(0, Math.round((Date.now() - ms) / 1000));
  if (s < 60) return 'just now';
  const m = Math.round(s / 60);
  if (m < 60) return `${m} min ago`;
  const h = Math.round(m / 60);
  if (h < 48) return `${h} h ago`;
  return `${Math.round(h / 24)} days ago`;
}

// clockWords: "2 h 5 min fast" for an offset of hub − phone = −2 h 5 min.
function clockWords(offset) {
  const m = Math.round(Math.abs(offset) / 60000);
  const d = Math.floor(m / 1440), h = Math.floor((m % 1440) / 60), mm = m % 60;
  const parts = [d && `${d} d`, h && `${h} h`, (mm || !(d || h)) && `${mm} min`].filter(Boolean);
  return `${parts.join(' ')} ${offset < 0 ? 'fast' : 'slow'}`;
}

function StatusBar() {
  const [s, setS] = useState(null);
  const [u, setU] = useState({ waiting: null });
  const [, tick] = useState(0);
  useEffect(() => onStatus(setS), []);
  useEffect(() => { const fn = (x) => setU(x); sw.subs.add(fn); fn({ waiting: sw.waiting, build: sw.build }); return () => sw.subs.delete(fn); }, []);
  useEffect(() => { const t = setInterval(() => tick((x) => x + 1), 20000); return () => clearInterval(t); }, []);
  // The bar holds its row from the first frame, so the screen below does
  // not jump as the first status arrives.
  if (!s) return html`<div class="status" data-testid="status" role="status" aria-live="polite"></div>`;
  const secure = window.isSecureContext;
  return html`<div class="status" data-testid="status" role="status" aria-live="polite"
      data-waiting=${s.waiting} data-rejected=${s.rejected} data-reachable=${String(s.reachable)} data-syncing=${String(s.syncing)} data-last-sync=${s.lastSync}>
    ${!secure && html`<span class="pill warn" data-testid="status-insecure">Open the https address / install the certificate — on this address the app cannot work offline.</span>`}
    ${navigator.standalone === false && html`<span class="pill warn" data-testid="status-install">On iPhone, install first: Share → Add to Home Screen. Entries made in a Safari tab stay in that tab, apart from the installed app.</span>`}
    ${u.waiting && html`<button class="pill warn" type="button" data-testid="status-update" onClick=${applyUpdate}>Update ready — tap to reload</button>`}
    ${s.waiting > 0 && html`<span class="pill" data-testid="status-waiting" data-count=${s.waiting}>${plural(s.waiting, 'entry', 'entries')} waiting to sync${s.syncing && html`<span data-testid="status-syncing"> · syncing</span>`}</span>`}
    ${s.reachable === false && html`<span class="pill warn" data-testid="status-unreachable">Hub unreachable — your entries are safe on this ${thisDevice()}</span>`}
    ${s.reachable === false && s.unreachableSince > 0 && Date.now() - s.unreachableSince > MOVED_AFTER_MS && html`<span class="pill warn" data-testid="status-moved">${movedWords(s.unreachableSince)}</span>`}
    ${s.waiting === 0 && s.syncing && html`<span class="pill" data-testid="status-syncing">Syncing…${s.received ? ` ${s.received} received` : ''}</span>`}
    ${s.waiting === 0 && s.lastSync > 0 && s.reachable !== false && !s.syncing && html`<span class="pill ok" data-testid="status-synced">Synced ${ago(s.lastSync)}</span>`}
    ${s.waiting === 0 && !s.lastSync && s.reachable === null && !s.syncing && html`<span class="pill" data-testid="status-never">Not synced yet</span>`}
    ${s.reachable === true && s.error && html`<span class="pill warn" data-testid="status-error">Sync stopped: ${s.error}</span>`}
    ${Math.abs(s.offset || 0) > 120000 && html`<span class="pill warn" data-testid="status-clock">This phone's clock is ${clockWords(s.offset)} — entries use the hub's time; please correct the phone's date and time</span>`}
    ${s.rejected > 0 && html`<button class="pill warn" type="button" data-testid="status-rejected" onClick=${() => navigate('/settings#rejected')}>${plural(s.rejected, 'entry', 'entries')} rejected — tap to see why</button>`}
    ${s.overtaken > 0 && html`<button class="pill warn" type="button" data-testid="status-overtaken" onClick=${() => navigate('/settings#rejected')}>${plural(s.overtaken, 'correction', 'corrections')} overtaken — tap to see</button>`}
  </div>`;
}

// After this long without the hub, the camp may have moved to another
// network: the status says what to do.
const MOVED_AFTER_MS = 10 * 60000;

function movedWords(since) {
  const min = Math.round((Date.now() - since) / 60000);
  const host = location.hostname;
  if (host.endsWith('.local')) {
    return `No answer from the hub for ${min} min. If the camp moved to another Wi-Fi, join the camp's Wi-Fi on this phone: the app finds the hub again by its name, ${host}. Your entries wait here meanwhile.`;
  }
  return `No answer from the hub for ${min} min. If the camp moved, the hub may have a new address: on the coach's laptop, scan the join page's code to open the app by the camp's name. Entries waiting here are sent once the hub answers at ${host} again.`;
}

function App() {
  const { path } = useRoute();
  // A screen is mounted afresh when the user goes to an address (a link,
  // Back), not when the screen itself rewrites its query in place (day,
  // filters): a re-render of the shell must never remount the screen and
  // lose what is being typed on it.
  const nav = useRef(null);
  if (!nav.current || nav.current.n !== routeCount()) nav.current = { n: routeCount(), key: path + location.search };
  const [build, setBuild] = useState(sw.build);
  useEffect(() => { const fn = (x) => setBuild(x.build); sw.subs.add(fn); fn(sw); return () => sw.subs.delete(fn); }, []);
  const Screen = ROUTES[path] || NotFound;
  // Ready once the app listens for moves (useRoute's effect runs first): a
  // tap on a link, or Back, straight after the first render is not missed.
  useEffect(() => { document.getElementById('app-root').dataset.ready = 'true'; }, []);
  return html`<header class="top">
      <${Link} to="/" class="home" data-testid="nav-home"><span class="mark" aria-hidden="true"></span>Cornerbook</${Link}>
      <span class="spacer"></span>
      <${Link} to="/today" class="gear" data-testid="nav-today-top">Today</${Link}>
      <${Link} to="/settings" class="gear" data-testid="nav-settings">Settings</${Link}>
    </header>
    <${StatusBar} />
    <main id="screen" data-address=${path + location.search}><${Screen} key=${nav.current.key} build=${build} /></main>`;
}

function NotFound() {
  return html`<section><h1>Not here</h1><p><${Link} to="/">Back to the start</${Link}></p></section>`;
}

deviceId().then(() => getMeta('offset')).then((offset) => {
  setClockOffset(offset || 0);
  const root = document.getElementById('app-root');
  root.textContent = '';
  render(html`<${App} />`, root);
  startSync();
  // Installed: ask once that the entries on this device are never evicted
  // (Chromium decides without a prompt; Settings shows the answer).
  if (navigator.storage && navigator.storage.persist && matchMedia('(display-mode: standalone)').matches) {
    navigator.storage.persisted().then((p) => p || navigator.storage.persist()).catch(() => {});
  }
});
setupSW();
