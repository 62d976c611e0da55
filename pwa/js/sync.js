// The sync loop: push the outbox, then pull pages since the cursor. One
// sync at a time across tabs and the service worker (Web Locks). The
// websocket only says "there is something new"; data always moves through
// push and pull. This module is also imported by the service worker, so it
// touches no window or document at load time.
import {
  ack, adoptPairing, applyPage, counts, deviceId, getMeta, getMetas, notify, pushBatch, rejectRows,
  resetForEpoch, restamp, setMeta,
} from './db.js';

const PUSH_BATCH = 200;

// trace records sync milestones when a test or benchmark asks for them
// (globalThis.__cbTrace = []); it costs nothing otherwise.
function trace(what) {
  if (globalThis.__cbTrace) globalThis.__cbTrace.push([what, Date.now()]);
}
// Pull pages are sized for the link: the first asks for 512 KB of
// records, each next one for what the last page's round trip would carry
// in about two seconds (within 64 KB–4 MB; the hub counts uncompressed JSON),
// so a crowded travel router gets small pages and a good Wi-Fi few round
// trips.
const PULL_LIMIT = 10000;
const PULL_BYTES = { first: 512 << 10, min: 64 << 10, max: 4 << 20, aimMs: 2000 };
export function nextPullBytes(bytes, ms) {
  const scaled = bytes * PULL_BYTES.aimMs / Math.max(ms, 50);
  // Grow at most fourfold a page, so one quick page on a busy link does
  // not ask for a page that outlasts the request's timeout.
  return Math.round(Math.min(PULL_BYTES.max, bytes * 4, Math.max(PULL_BYTES.min, scaled)));
}
const TIMEOUT_MS = 10000;

export class HubError extends Error {
  constructor(status, body) {
    super((body && body.reason) || `hub answered ${status}`);
    this.status = status;
    this.body = body || {};
  }
}

// hubGet reads one JSON answer from the hub with this device's pass and
// the sync's time limit (a HubError when the hub refuses).
export const hubGet = (url) => api('GET', url);

async function api(method, url, body, knownToken) {
  const token = knownToken !== undefined ? knownToken : await getMeta('token');
  const headers = { Accept: 'application/json' };
  if (token) headers.Authorization = `Bearer ${token}`;
  if (body !== undefined) headers['Content-Type'] = 'application/json';
  const ctl = new AbortController();
  const timer = setTimeout(() => ctl.abort(), TIMEOUT_MS);
  let res;
  try {
    res = await fetch(url, { method, headers, body: body === undefined ? undefined : JSON.stringify(body), cache: 'no-store', signal: ctl.signal });
  } finally {
    clearTimeout(timer);
  }
  let data = null;
  const type = res.headers.get('Content-Type') || '';
  if (type.includes('json')) {
    try { data = await res.json(); } catch (_) { data = null; }
  }
  if (!res.ok || !data) throw new HubError(res.status, data);
  return data;
}

// Two locks of this origin (Web Locks, shared by tabs and the service
// worker). The sync lock runs one push-then-pull at a time; the push lock
// runs one push at a time. A sync takes the sync lock and then, for its
// push, the push lock; a save made while a pull is running pushes under
// the push lock alone, so it reaches the hub without waiting for pages
// on a slow link. Pull and push write different stores (records and the
// cursor; the outbox and the rejections), and a pulled version replaces a
// local one only when its stamp wins, so the two may overlap.
const chains = {};
function lockNamed(name, fn) {
  if (typeof navigator !== 'undefined' && navigator.locks && navigator.locks.request) {
    return navigator.locks.request(name, fn);
  }
  const chain = chains[name] || (chains[name] = { p: Promise.resolve() });
  const run = chain.p.then(fn, fn);
  chain.p = run.catch(() => {});
  return run;
}
const withLock = (fn) => lockNamed('cornerbook-sync', fn);

// pushAll pushes the outbox under the push lock. An answer from a hub of
// another epoch (restored or replaced) resets this device for it, unless
// the push runs beside a pull (alongPull): then the pull, which sees the
// same epoch on its next page, resets, and the push only stops.
function pushAll(alongPull) {
  return lockNamed('cornerbook-push', () => pushUnlocked(alongPull));
}

async function pushUnlocked(alongPull) {
  let skewRetries = 0;
  let pushed = 0;
  let batch = PUSH_BATCH;
  for (;;) {
    const { rows, total, device, epoch, token } = await pushBatch(batch);
    if (!rows.length) return pushed;
    const waiting = total - rows.length;
    const body = {
      device: device || await deviceId(),
      epoch: epoch || undefined,
      mutations: rows.map((r) => ({ n: r.n, op: r.op, record: r.record })),
      waiting: waiting || undefined, // shown on the coach's device list
    };
    const sentAt = Date.now();
    let res;
    trace('push-sent');
    try {
      res = await api('POST', '/api/push', body, token || null);
      trace('push-answered');
    } catch (e) {
      const gotAt = Date.now();
      if (e instanceof HubError && e.status === 409 && e.body.code === 'CLOCK_SKEW' && e.body.serverTime && skewRetries < 2) {
        skewRetries++;
        await restamp(e.body.serverTime, sentAt, gotAt);
        await setMeta('clockFixedAt', Date.now());
        continue;
      }
      if (e instanceof HubError && e.status === 413 && rows.length > 1) {
        batch = Math.max(1, Math.floor(rows.length / 2)); // too big a request: send fewer at a time
        continue;
      }
      if (e instanceof HubError && [400, 422].includes(e.status) && e.body.code && rows.length > 1) {
        // Refused as a whole: one entry may spoil the push. Send halves, so
        // the good entries land and the bad one is found and filed alone.
        batch = Math.ceil(rows.length / 2);
        continue;
      }
      if (e instanceof HubError && [400, 413, 422].includes(e.status) && e.body.code) {
        // One entry, refused for good: filed with its field, never retried as is.
        const field = String(e.body.field || '').replace(/^mutations\[\d+\]\.(record\.)?/, '');
        await rejectRows(rows, { ...e.body, field });
        batch = PUSH_BATCH;
        continue;
      }
      throw e;
    }
    const gotAt = Date.now();
    await ack(res, sentAt, gotAt);
    pushed += rows.length;
    if (res.epoch && epoch && res.epoch !== epoch) {
      if (alongPull) return pushed;
      await resetForEpoch(res.epoch);
      continue;
    }
    if ((res.ackedThrough || 0) < rows[rows.length - 1].n) {
      throw new Error('the hub did not acknowledge the whole batch');
    }
  }
}

async function pullAll() {
  let resets = 0;
  // One read for what the loop needs; the epoch changes only through
  // resetForEpoch (or a pull page, applied below), so it is re-read then.
  let [cursor, epoch, token] = await getMetas(['cursor', 'epoch', 'token']);
  cursor = cursor || 0;
  let bytes = PULL_BYTES.first;
  const ask = (since) => {
    const sentAt = Date.now();
    trace('pull-sent');
    return api('GET', `/api/pull?since=${since}&limit=${PULL_LIMIT}&bytes=${bytes}`, undefined, token || null)
      .then((page) => { trace('pull-answered'); return { page, sentAt, gotAt: Date.now() }; });
  };
  let next = null; // the next page, asked for while this one is written
  for (;;) {
    const { page, sentAt, gotAt } = await (next || ask(cursor));
    next = null;
    bytes = nextPullBytes(bytes, gotAt - sentAt);
    if (resets < 1 && ((epoch && page.epoch && page.epoch !== epoch) || (page.maxSeq < cursor))) {
      resets++;
      await resetForEpoch(page.epoch);
      await pushAll();
      cursor = 0;
      [epoch, token] = await getMetas(['epoch', 'token']);
      continue;
    }
    // The link fetches the next page while the database writes this one.
    // (A failure shows when it is awaited; one never awaited, because
    // writing this page failed, is dropped quietly.)
    if (page.more) { next = ask(page.next); next.catch(() => {}); }
    await applyPage(page, sentAt, gotAt);
    trace('page-applied');
    cursor = page.next;
    if (page.epoch) epoch = page.epoch;
    if (!page.more) return;
  }
}

// join redeems a join code from the coach's screen: the hub answers with
// this device's token and id, which are stored before anything else syncs.
export async function join(code, name) {
  const res = await api('POST', '/api/join', { code: code.trim(), name: name.trim() });
  await withLock(() => adoptPairing(res.token, res.device));
  return res;
}

// pushOnce pushes the whole outbox (the service worker's Background Sync).
export function pushOnce(reason) {
  return withLock(async () => {
    await pushAll();
    await setMeta('lastSync', Date.now());
    notify({ type: 'synced', reason });
  });
}

// syncOnce pushes, then pulls, under the lock.
export function syncOnce(reason) {
  return withLock(async () => {
    await pushAll();
    await pullAll();
    await setMeta('lastSync', Date.now());
    notify({ type: 'synced', reason });
  });
}

// ---------------- page side: triggers, websocket, status ----------------

export const status = {
  waiting: 0,
  rejected: 0,
  overtaken: 0,
  lastSync: 0,
  reachable: null, // null = not tried yet
  unreachableSince: 0, // when the hub stopped answering (0: it answers)
  syncing: false,
  error: '',
  clockFixed: false,
  received: 0, // records taken in during the running sync (progress)
};
const subs = new Set();
export function onStatus(fn) {
  subs.add(fn);
  fn({ ...status });
  return () => subs.delete(fn);
}
function publish() {
  const s = { ...status };
  subs.forEach((fn) => fn(s));
}

export async function refreshCounts() {
  Object.assign(status, await counts());
  publish();
}

let running = false;
let again = false;
let failures = 0;
let timer = null;
let debounce = null;

function schedule(ms) {
  clearTimeout(timer);
  timer = setTimeout(() => requestSync('timer'), ms);
}

// requestSync coalesces triggers: one run at a time, one more if asked meanwhile.
export async function requestSync(reason) {
  trace('request:' + reason);
  if (running) {
    again = true;
    // A save while a sync runs is pushed at once, beside the pull; the
    // sync's next round pulls it back with whatever else is new.
    if (reason === 'write') pushAlongside();
    return;
  }
  running = true;
  status.syncing = true;
  status.received = 0;
  publish();
  try {
    do {
      again = false;
      trace('sync-start');
      await syncOnce(reason);
      trace('sync-done');
    } while (again);
    failures = 0;
    status.reachable = true;
    status.unreachableSince = 0;
    status.error = '';
    schedule(30000);
  } catch (e) {
    failures++;
    // Unreachable: no connection, a timeout, a hub error, or an answer that
    // is not the hub's JSON (something else at this address).
    status.reachable = !(e instanceof TypeError || e.name === 'AbortError' ||
      (e instanceof HubError && (e.status >= 500 || !e.body || !e.body.code)));
    if (status.reachable === false && !status.unreachableSince) status.unreachableSince = Date.now();
    status.error = e instanceof HubError && e.status === 401
      ? 'this device is not paired with the hub (or its pass was revoked): open Settings → Join'
      : (e.message || String(e));
    const base = Math.min(60000, 2000 * 2 ** Math.min(failures - 1, 5));
    schedule(base / 2 + Math.random() * base / 2);
  } finally {
    running = false;
    status.syncing = false;
    await refreshCounts();
  }
}

// pushAlongside pushes the outbox while a pull runs. A failure here is
// left to the running sync, which pushes again in its next round and
// reports what went wrong.
let alongside = null;
function pushAlongside() {
  if (alongside) return;
  alongside = pushAll(true)
    .then((n) => { trace('pushed-alongside'); if (n) return refreshCounts(); })
    .catch(() => {})
    .finally(() => { alongside = null; });
}

// syncSoon runs after a local write: at once for the first write, then
// at most once per 300 ms while writes keep coming (a burst of taps ringside
// becomes one push).
let lastWriteSync = 0;
export function syncSoon() {
  clearTimeout(debounce);
  const now = Date.now();
  if (now - lastWriteSync >= 300) {
    lastWriteSync = now;
    requestSync('write');
    return;
  }
  debounce = setTimeout(() => { lastWriteSync = Date.now(); requestSync('write'); }, 300 - (now - lastWriteSync));
}

async function registerBackgroundSync() {
  try {
    const reg = await navigator.serviceWorker?.ready;
    if (reg && reg.sync) await reg.sync.register('outbox');
  } catch (_) { /* not available: the foreground triggers do the work */ }
}

let ws = null;
let wsFailures = 0;
let lastPokeSeq = -1;
let lastFlags;

function connectWS() {
  const proto = location.protocol === 'https:' ? 'wss:' : 'ws:';
  getMeta('token').then((token) => {
    // Browsers cannot set headers on a websocket: the hub reads the token
    // from the offered subprotocols.
    const protocols = token ? ['cornerbook', `cornerbook.token.${token}`] : ['cornerbook'];
    try {
      ws = new WebSocket(`${proto}//${location.host}/api/ws`, protocols);
    } catch (_) {
      return retryWS();
    }
    ws.onmessage = (e) => {
      let m;
      try { m = JSON.parse(e.data); } catch (_) { return; }
      // hello: (re)connected, so catch up. poke: only when the hub's
      // sequence moved (the hub also sends heartbeat pokes).
      trace('ws-' + m.t);
      if (m.t === 'hello') { wsFailures = 0; lastPokeSeq = m.seq; lastFlags = m.flags; requestSync('ws-hello'); }
      if (m.t === 'poke' && m.seq !== lastPokeSeq) { lastPokeSeq = m.seq; requestSync('poke'); }
      // The hub recomputed the day's flags (also without new records, e.g.
      // the check-in hour passed): coach screens re-read them.
      if (m.t === 'poke' && m.flags !== undefined && m.flags !== lastFlags) { lastFlags = m.flags; notify({ type: 'flags', n: m.flags }); }
    };
    ws.onclose = () => { ws = null; retryWS(); };
    ws.onerror = () => { try { ws && ws.close(); } catch (_) { /* closing anyway */ } };
  });
}

function retryWS() {
  wsFailures++;
  const base = Math.min(30000, 1000 * 2 ** Math.min(wsFailures - 1, 5));
  setTimeout(connectWS, base / 2 + Math.random() * base / 2);
}

let started = false;
// startSync wires every trigger. Call once per page.
export function startSync(onData) {
  if (started) return;
  started = true;
  import('./db.js').then(({ onChange }) => {
    onChange((m) => {
      if (m.type === 'changed' && m.local) { syncSoon(); registerBackgroundSync(); }
      if (m.paired && ws) { try { ws.close(); } catch (_) { /* reconnects with the new pass */ } }
      // The waiting count shows a push's progress; received shows a pull's.
      if (status.syncing && m.pulled) status.received += m.pulled;
      if (onData && (m.type === 'changed' || m.type === 'synced')) onData(m);
      refreshCounts();
    });
  });
  document.addEventListener('visibilitychange', () => {
    if (document.visibilityState === 'visible') {
      requestSync('visible');
      if (!ws) connectWS();
    }
  });
  addEventListener('online', () => requestSync('online'));
  addEventListener('pageshow', (e) => { if (e.persisted) requestSync('pageshow'); });
  refreshCounts();
  requestSync('start');
  connectWS();
}
