// The hub's read API for the coach's screens: JSON over the same origin,
// with this device's pass when it has one. Flags, chart series and plan
// checks are computed by the hub; these screens only draw them.
import { getMeta, getRecord, onChange } from '../db.js';
import { useState, useEffect } from '../ui.js';

export class HubReadError extends Error {
  constructor(status, body, offline) {
    super(offline ? 'the hub cannot be reached' : ((body && body.reason) ? `${body.field ? body.field + ' ' : ''}${body.reason}` : `the hub answered ${status}`));
    this.status = status;
    this.body = body || {};
    this.offline = !!offline;
  }
}

async function call(method, url, body) {
  const token = await getMeta('token');
  const headers = { Accept: 'application/json' };
  if (token) headers.Authorization = `Bearer ${token}`;
  if (body !== undefined) headers['Content-Type'] = 'application/json';
  const ctl = new AbortController();
  const timer = setTimeout(() => ctl.abort(), 10000);
  let res;
  try {
    res = await fetch(url, { method, headers, cache: 'no-store', signal: ctl.signal, body: body === undefined ? undefined : JSON.stringify(body) });
  } catch (e) {
    throw new HubReadError(0, null, true);
  } finally {
    clearTimeout(timer);
  }
  let data = null;
  if ((res.headers.get('Content-Type') || '').includes('json')) {
    try { data = await res.json(); } catch (_) { data = null; }
  }
  if (!res.ok || !data) throw new HubReadError(res.status, data, res.status >= 500 && !data);
  return data;
}

export const hubGet = (url) => call('GET', url);
export const hubPost = (url, body) => call('POST', url, body);

// Cached answers, so a screen opened offline shows the last copy it had,
// saying when that was.
// At most KEEP answers are kept; the least recently stored go first.
const KEEP = 24;
export function remember(key, data) {
  try {
    const idx = JSON.parse(localStorage.getItem('cb.coach.keys') || '[]').filter((k) => k !== key);
    idx.push(key);
    while (idx.length > KEEP) localStorage.removeItem('cb.coach.' + idx.shift());
    localStorage.setItem('cb.coach.keys', JSON.stringify(idx));
    localStorage.setItem('cb.coach.' + key, JSON.stringify({ at: Date.now(), data }));
  } catch (_) { /* storage full or blocked: the copy is not kept */ }
}
export function recall(key) {
  try { return JSON.parse(localStorage.getItem('cb.coach.' + key) || 'null'); } catch (_) { return null; }
}

// useHubCopy is what load() reads from the hub for key ("" loads
// nothing), with this device's last copy of it shown until the answer
// comes: {data, error, loaded, cachedAt}. A refusal keeps that copy; what
// was read for another key is never returned. deps reload the same key.
export function useHubCopy(key, load, deps = []) {
  const [st, setSt] = useState({ key: '', data: null, error: '', loaded: false });
  useEffect(() => {
    if (!key) return undefined;
    let alive = true;
    const c = recall(key);
    if (c) setSt({ key, data: c.data, error: '', cachedAt: c.at, loaded: true });
    load().then((data) => {
      if (!alive) return;
      remember(key, data);
      setSt({ key, data, error: '', loaded: true });
    }, (e) => {
      if (alive) setSt((o) => (o.key === key ? { ...o, error: e.message, loaded: true } : { key, data: null, error: e.message, loaded: true }));
    });
    return () => { alive = false; };
  }, [key, ...deps]);
  return st.key === key ? st : { data: null, error: '', loaded: false };
}

let tables = null;
// getTables: weight classes, CR-10, protocols, rule thresholds, levels.
export function getTables() {
  if (!tables) {
    tables = hubGet('/api/tables').then((t) => { remember('tables', t); return t; }, (e) => {
      tables = null;
      const c = recall('tables');
      if (c) return c.data;
      throw e;
    });
  }
  return tables;
}

// readRecord: the record from this device's store (where pulled records
// live), else its latest version from the hub's history.
export async function readRecord(id) {
  const local = await getRecord(id);
  if (local) return { rec: local, from: 'device' };
  try {
    const h = await hubGet(`/api/records/${encodeURIComponent(id)}/history`);
    const v = h.versions || [];
    return v.length ? { rec: v[v.length - 1], from: 'hub' } : null;
  } catch (_) {
    return null;
  }
}

// onData calls fn (debounced) whenever records arrive or a sync finishes:
// the moment the hub's flags may have moved.
export function onData(fn, ms = 250) {
  let t = null;
  const off = onChange((m) => {
    if (m.type === 'synced' || m.type === 'flags' || (m.type === 'changed' && (m.pulled || m.acked || m.local))) {
      clearTimeout(t);
      t = setTimeout(fn, ms);
    }
  });
  return () => { clearTimeout(t); off(); };
}
