// Standing: each athlete's reference numbers from the hub for a day (CMJ
// baseline and noise, 7-day sparring rounds against the cap, a running
// stand-down), from GET /api/baselines. Fetched when the hub answers and
// kept in memory only; the hub computes every number, the screens show it.
import { useState, useEffect } from '../ui.js';
import { getMeta } from '../db.js';
import { onStatus } from '../sync.js';

const TIMEOUT_MS = 8000;
const memory = new Map(); // day → { at, byId }

async function fetchDay(day) {
  const token = await getMeta('token');
  const headers = { Accept: 'application/json' };
  if (token) headers.Authorization = `Bearer ${token}`;
  const ctl = new AbortController();
  const timer = setTimeout(() => ctl.abort(), TIMEOUT_MS);
  try {
    const res = await fetch(`/api/baselines?day=${encodeURIComponent(day)}`, { headers, cache: 'no-store', signal: ctl.signal });
    const type = res.headers.get('Content-Type') || '';
    if (!res.ok || !type.includes('json')) throw new Error(`hub answered ${res.status}`);
    const data = await res.json();
    const byId = {};
    for (const a of data.athletes || []) byId[a.athlete] = a;
    const got = { at: Date.now(), byId };
    memory.set(day, got);
    return got;
  } finally {
    clearTimeout(timer);
  }
}

// useStanding returns { state, at, byId } for a day. state is "loading",
// "live" (answered now), "kept" (the hub is out of reach; the copy fetched
// earlier in this session) or "offline" (out of reach, nothing known).
// It fetches again after each completed sync, so a round just synced shows.
export function useStanding(day) {
  const [s, set] = useState(() => {
    const m = memory.get(day);
    return m ? { state: 'kept', ...m } : { state: 'loading', at: 0, byId: {} };
  });
  useEffect(() => {
    let live = true;
    let seen = null;
    let busy = false;
    const load = async () => {
      if (busy) return;
      busy = true;
      try {
        const got = await fetchDay(day);
        if (live) set({ state: 'live', ...got });
      } catch (_) {
        const m = memory.get(day);
        if (live) set(m ? { state: 'kept', ...m } : { state: 'offline', at: 0, byId: {} });
      } finally { busy = false; }
    };
    load();
    const stop = onStatus((st) => {
      if (st.syncing) return;
      const ls = st.lastSync || 0;
      if (seen === null) { seen = ls; return; }
      if (ls > seen) { seen = ls; load(); }
    });
    const every = setInterval(load, 60000);
    return () => { live = false; stop(); clearInterval(every); };
  }, [day]);
  return s;
}

// hhmm: a time of day for "as of" lines.
export function hhmm(ms) {
  const d = new Date(ms);
  return `${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`;
}
