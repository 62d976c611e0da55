// The device's store: IndexedDB through the vendored idb wrapper.
//
//   records   every record this device knows, by id; indexes by athlete+day, day, kind
//   outbox    mutations waiting for the hub, by their device counter n
//   meta      deviceId, hlc, cursor, epoch, offset (clock offset ms), counter, token, …
//   rejected  mutations the hub refused, with code, field and reason, by n
//
// A local write puts the record, its outbox row and the clock in ONE
// durability-'strict' transaction; the promise resolves only once it has
// committed to disk. Used by the pages and by the service worker.
import { openDB } from '/vendor/idb/index.js';
import { Clock } from './hlc.js';
import { hubWins, localDay, rfc3339, setClockOffset } from './record.js';
import { uuidv7 } from './uuid.js';
import { checkBody, rightsTrouble, CheckError } from './checks.js';

export const DB_NAME = 'cornerbook';
const DB_VERSION = 1;
const STRICT = { durability: 'strict' };

let dbp = null;

export function openStore() {
  if (!dbp) {
    dbp = openDB(DB_NAME, DB_VERSION, {
      upgrade(db) {
        const rec = db.createObjectStore('records', { keyPath: 'id' });
        rec.createIndex('athlete_day', ['athlete', 'day']);
        rec.createIndex('day', 'day');
        rec.createIndex('kind', 'kind');
        db.createObjectStore('outbox', { keyPath: 'n' });
        db.createObjectStore('meta');
        db.createObjectStore('rejected', { keyPath: 'n' });
      },
      blocking() {
        // A newer version of the app wants to upgrade the schema: let it.
        dbp.then((db) => db.close());
        dbp = null;
        if (typeof location !== 'undefined' && typeof document !== 'undefined') location.reload();
      },
    });
  }
  return dbp;
}

// ---- change notification (this page, other tabs, the service worker) ----

const listeners = new Set();
let channel = null;
try {
  channel = new BroadcastChannel('cornerbook');
  channel.onmessage = (e) => listeners.forEach((fn) => fn(e.data || {}));
} catch (_) { /* no BroadcastChannel: single context only */ }

export function onChange(fn) {
  listeners.add(fn);
  return () => listeners.delete(fn);
}

export function notify(msg) {
  listeners.forEach((fn) => fn(msg));
  if (channel) channel.postMessage(msg);
}

// ---- meta ----

export async function getMeta(key) {
  return (await openStore()).get('meta', key);
}

// getMetas reads several meta keys in one transaction, in the order asked.
export async function getMetas(keys) {
  const tx = (await openStore()).transaction('meta');
  return Promise.all(keys.map((k) => tx.store.get(k)));
}

export async function setMeta(key, value) {
  const db = await openStore();
  await db.put('meta', value, key);
}

export async function allMeta() {
  const db = await openStore();
  const tx = db.transaction('meta');
  const keys = await tx.store.getAllKeys();
  const vals = await tx.store.getAll();
  const out = {};
  keys.forEach((k, i) => { out[k] = vals[i]; });
  return out;
}

// RELAXED is for commits whose loss is harmless: a lost pull page takes its
// cursor with it and is pulled again; a lost acknowledgement re-sends rows
// the hub skips as duplicates.
const RELAXED = { durability: 'relaxed' };

// deviceId returns this device's id, creating it on first use.
export async function deviceId() {
  const db = await openStore();
  const known = await db.get('meta', 'deviceId');
  if (known) return known;
  const tx = db.transaction('meta', 'readwrite', STRICT);
  let id = await tx.store.get('deviceId');
  if (!id) {
    id = uuidv7();
    await tx.store.put(id, 'deviceId');
    await tx.store.put(Date.now(), 'createdAt');
  }
  await tx.done;
  return id;
}

// stamp issues the next clock value inside a transaction that holds meta.
async function stampIn(meta) {
  const clock = new Clock(await meta.get('hlc'));
  const offset = (await meta.get('offset')) || 0;
  setClockOffset(offset);
  const s = clock.now(Date.now() + offset);
  await meta.put(clock.last, 'hlc');
  return s;
}

async function nextN(meta) {
  const n = ((await meta.get('counter')) || 0) + 1;
  await meta.put(n, 'counter');
  return n;
}

function opOf(rec) {
  if (rec.deleted) return 'delete';
  return (rec.gen || 0) >= 1 ? 'restore' : 'upsert';
}

// write stores one new version of a record and queues it, in one strict
// transaction. change(old) returns the new record fields (old is undefined
// for a new record). Resolves with the stored record after commit.
async function write(id, change, op) {
  const me = await deviceId();
  const db = await openStore();
  const tx = db.transaction(['records', 'outbox', 'meta', 'rejected'], 'readwrite', STRICT);
  const records = tx.objectStore('records');
  const meta = tx.objectStore('meta');
  const old = id ? await records.get(id) : undefined;
  const fields = change(old);
  const stamp = await stampIn(meta); // also loads the current clock offset
  const rec = {
    ...(old || {}),
    ...fields,
    id: (old && old.id) || fields.id || uuidv7(),
    device: me,
    // at is when the entry was observed: a correction, delete or restore
    // keeps it; the stamp records the edit.
    at: fields.at || (old && old.at) || rfc3339(),
    stamp,
  };
  if (!rec.athlete) delete rec.athlete;
  if (!rec.gen) delete rec.gen;
  if (!rec.deleted) delete rec.deleted;
  // What the hub's policy would refuse from this device is refused here,
  // in its words, before anything is saved (the transaction is abandoned).
  const denied = rightsTrouble((await meta.get('role')) || '', (await meta.get('athlete')) || '', rec, old);
  if (denied) {
    tx.done.catch(() => {});
    tx.abort();
    throw new CheckError(rec.kind, denied);
  }
  const n = await nextN(meta);
  await records.put(rec);
  await tx.objectStore('outbox').put({ n, op: op || opOf(rec), record: rec });
  // A new version of a rejected record is its correction.
  const rej = tx.objectStore('rejected');
  for (const r of await rej.getAll()) {
    if (r.id === rec.id) await rej.delete(r.n);
  }
  await tx.done;
  notify({ type: 'changed', local: true });
  return rec;
}

// save creates or edits a record: {id?, kind, athlete?, day, at?, body}. The
// hub's checks run first: what the hub would refuse is refused here, with
// its field and words (a CheckError), and nothing is saved.
export function save(draft) {
  const bad = checkBody(draft.kind, draft.body);
  if (bad) return Promise.reject(new CheckError(draft.kind, bad));
  return write(draft.id, (old) => {
    const f = { kind: draft.kind, day: draft.day, body: draft.body };
    if (draft.athlete) f.athlete = draft.athlete;
    if (draft.at) f.at = draft.at; // the moment a weigh-in or a step happened, with its offset
    if (!old && draft.id) f.id = draft.id;
    if (old && old.deleted) throw new Error('this entry is deleted; restore it first');
    return f;
  }, 'upsert');
}

// remove writes a tombstone: the whole record, deleted, with a new stamp.
export function remove(id) {
  return write(id, (old) => {
    if (!old) throw new Error('no such entry');
    return { deleted: true };
  }, 'delete');
}

// restore undoes a delete: live again, one generation above the tombstone.
export function restore(id) {
  return write(id, (old) => {
    if (!old || !old.deleted) throw new Error('this entry is not deleted');
    return { deleted: false, gen: (old.gen || 0) + 1 };
  }, 'restore');
}

// observeStamp moves this device's clock past a stamp it has seen (the
// receive rule), so its next version sorts after it.
export async function observeStamp(stamp) {
  if (!stamp || typeof stamp.l !== 'number') return;
  const db = await openStore();
  const tx = db.transaction('meta', 'readwrite', STRICT);
  const clock = new Clock(await tx.store.get('hlc'));
  clock.update(stamp, Date.now() + ((await tx.store.get('offset')) || 0));
  await tx.store.put(clock.last, 'hlc');
  await tx.done;
}

// ---- reads ----

export async function getRecord(id) {
  return (await openStore()).get('records', id);
}

export async function byDay(day) {
  return (await openStore()).getAllFromIndex('records', 'day', day);
}

export async function byKind(kind) {
  return (await openStore()).getAllFromIndex('records', 'kind', kind);
}

export async function byAthleteDay(athlete, day) {
  return (await openStore()).getAllFromIndex('records', 'athlete_day', [athlete, day]);
}

// athletes lists live athlete records, sorted by name.
export async function athletes() {
  const all = await byKind('athlete');
  return all
    .filter((r) => !r.deleted && r.body && r.body.name && r.body.active !== false)
    .map((r) => ({ id: r.id, name: r.body.name, units: r.body.units === 'lb' ? 'lb' : 'kg' }))
    .sort((a, b) => a.name.localeCompare(b.name));
}

export async function outboxBatch(limit) {
  const db = await openStore();
  const rows = [];
  let cur = await db.transaction('outbox').store.openCursor();
  while (cur && rows.length < limit) {
    rows.push(cur.value);
    cur = await cur.continue();
  }
  return rows;
}

export async function rejectedList() {
  return (await openStore()).getAll('rejected');
}

// counts reads what the status line shows in one transaction.
export async function counts() {
  const tx = (await openStore()).transaction(['outbox', 'rejected', 'meta']);
  const [waiting, filed, lastSync, offset] = await Promise.all([
    tx.objectStore('outbox').count(), tx.objectStore('rejected').getAll(),
    tx.objectStore('meta').get('lastSync'), tx.objectStore('meta').get('offset'),
  ]);
  const overtaken = filed.filter((r) => r.code === 'OVERTAKEN').length;
  return { waiting, rejected: filed.length - overtaken, overtaken, lastSync: lastSync || 0, offset: offset || 0 };
}

// ---- sync steps (each one transaction) ----

// clockIn applies the receive rule for the hub's clock and smooths the
// offset between the hub's time and this device's.
async function clockIn(meta, serverHLC, serverTime, sentAt, gotAt) {
  let offset = (await meta.get('offset')) || 0;
  if (typeof serverTime === 'number' && serverTime > 0 && sentAt) {
    const sample = serverTime - (sentAt + gotAt) / 2;
    offset = Math.abs(sample - offset) > 5000 ? sample : offset * 0.7 + sample * 0.3;
    await meta.put(Math.round(offset), 'offset');
    setClockOffset(offset);
  }
  if (serverHLC && typeof serverHLC.l === 'number') {
    const clock = new Clock(await meta.get('hlc'));
    clock.update(serverHLC, Date.now() + offset);
    await meta.put(clock.last, 'hlc');
  }
}

// ack removes outbox rows through ackedThrough and files the rejections,
// in one transaction. Rows above ackedThrough stay queued.
export async function ack(res, sentAt, gotAt) {
  const db = await openStore();
  // With rejections the commit must be durable: the hub will not send them again.
  const durable = (res.rejected && res.rejected.length) || (res.overtaken && res.overtaken.length) ? STRICT : RELAXED;
  const tx = db.transaction(['outbox', 'rejected', 'meta'], 'readwrite', durable);
  const outbox = tx.objectStore('outbox');
  const rej = tx.objectStore('rejected');
  const byN = new Map((res.rejected || []).map((r) => [r.n, r]));
  const lost = new Map((res.overtaken || []).map((o) => [o.n, o]));
  const through = res.ackedThrough || 0;
  let removed = 0;
  let cur = await outbox.openCursor(IDBKeyRange.upperBound(through));
  while (cur) {
    const row = cur.value;
    const r = byN.get(row.n);
    if (r) {
      await rej.put({ n: row.n, id: row.record.id, code: r.code, field: r.field || '', reason: r.reason, op: row.op, record: row.record, when: Date.now() });
    }
    const o = lost.get(row.n);
    if (o) {
      // This device's version lost to another device's later one: kept
      // for its user to see and apply again, not dropped in silence.
      await rej.put({ n: row.n, id: row.record.id, code: 'OVERTAKEN', field: '', reason: '', op: row.op, record: row.record, when: Date.now(),
        by: { device: o.device, name: o.name || '', at: o.at || '', stamp: o.stamp, deleted: !!o.deleted } });
    }
    await cur.delete();
    removed++;
    cur = await cur.continue();
  }
  const meta = tx.objectStore('meta');
  await clockIn(meta, res.serverHLC, res.serverTime, sentAt, gotAt);
  await meta.put(Date.now(), 'lastPush');
  await tx.done;
  if (removed) notify({ type: 'changed', acked: removed, rejected: byN.size + lost.size });
  return removed;
}

// applyPage merges one pulled page and stores the cursor with it, in one
// transaction: a crash mid-pull resumes from the last committed page.
export async function applyPage(page, sentAt, gotAt) {
  const db = await openStore();
  const tx = db.transaction(['records', 'meta'], 'readwrite', RELAXED);
  const records = tx.objectStore('records');
  let changed = 0;
  // Every read is asked for at once and every write follows without
  // waiting on each: a transaction runs its requests in order, and a page
  // of thousands of records no longer waits a round trip to the database
  // per record.
  const incoming = (page.records || []).filter((r) => r && r.id);
  const locals = await Promise.all(incoming.map((r) => records.get(r.id)));
  const writes = [];
  incoming.forEach((r, i) => {
    if (hubWins(r, locals[i])) {
      writes.push(records.put(r));
      changed++;
    }
  });
  // A record this device may no longer read (a note made staff-only after
  // it was shared with the athlete) is taken back: the hub sends its id
  // alone, and the copy here goes. What waits to sync stays queued.
  for (const id of page.withdrawn || []) {
    if (typeof id !== 'string') continue;
    writes.push(records.delete(id));
    changed++;
  }
  await Promise.all(writes);
  const meta = tx.objectStore('meta');
  await meta.put(page.next, 'cursor');
  if (page.epoch) await meta.put(page.epoch, 'epoch');
  await clockIn(meta, page.serverHLC, page.serverTime, sentAt, gotAt);
  await tx.done;
  if (changed) notify({ type: 'changed', pulled: changed });
  return changed;
}

// resetForEpoch handles a hub whose database was replaced or restored: the
// cursor goes back to 0 and every record this device wrote is queued again
// as a new mutation with its original stamp (idempotent on the hub).
export async function resetForEpoch(epoch) {
  const me = await deviceId();
  const db = await openStore();
  const tx = db.transaction(['records', 'outbox', 'meta'], 'readwrite', STRICT);
  const meta = tx.objectStore('meta');
  const outbox = tx.objectStore('outbox');
  let queued = 0;
  let cur = await tx.objectStore('records').openCursor();
  while (cur) {
    const rec = cur.value;
    if (rec.device === me) {
      await outbox.put({ n: await nextN(meta), op: opOf(rec), record: rec });
      queued++;
    }
    cur = await cur.continue();
  }
  await meta.put(0, 'cursor');
  if (epoch) await meta.put(epoch, 'epoch');
  await tx.done;
  return queued;
}

// restamp answers CLOCK_SKEW: with the offset corrected from the hub's
// time, the clock restarts from corrected time and every waiting mutation
// (and the record it carries) gets a fresh stamp, in queue order.
export async function restamp(serverTime, sentAt, gotAt) {
  const db = await openStore();
  const tx = db.transaction(['records', 'outbox', 'meta'], 'readwrite', STRICT);
  const meta = tx.objectStore('meta');
  const offset = Math.round(serverTime - (sentAt + gotAt) / 2);
  const correction = offset - ((await meta.get('offset')) || 0);
  await meta.put(offset, 'offset');
  setClockOffset(offset);
  // The entry's time (and its day, when the day came from that time) was
  // read off the wrong clock too: shift it by the correction.
  const retime = (rec) => {
    const t = Date.parse(rec.at);
    if (!Number.isFinite(t)) return rec;
    const fixed = new Date(t + correction);
    const out = { ...rec, at: rfc3339(fixed) };
    if (rec.day && rec.day === localDay(new Date(t))) out.day = localDay(fixed);
    return out;
  };
  // Restart the clock from corrected time, but never below a stamp the hub
  // could already hold (within its drift limit, 60 s): an edit made later
  // must still sort after the version it corrects.
  const pt = Date.now() + offset;
  const clock = new Clock({ l: pt, c: 0 });
  const records = tx.objectStore('records');
  const limit = serverTime + 30000;
  let rc = await records.openCursor();
  while (rc) {
    const st = rc.value.stamp;
    if (st && st.l <= limit) clock.restore(st);
    rc = await rc.continue();
  }
  let cur = await tx.objectStore('outbox').openCursor();
  let n = 0;
  while (cur) {
    const row = cur.value;
    const old = row.record.stamp;
    row.record = { ...retime(row.record), stamp: clock.now(pt) };
    await cur.update(row);
    const local = await records.get(row.record.id);
    if (local && local.stamp.l === old.l && local.stamp.c === old.c && local.device === row.record.device) {
      await records.put(row.record);
    }
    n++;
    cur = await cur.continue();
  }
  await meta.put(clock.last, 'hlc');
  await tx.done;
  return n;
}

// discard drops a rejected mutation. If the local copy is still the
// refused version, it is removed and the cursor reset, so the next pull
// brings back the hub's version (if the hub has one).
export async function discard(n) {
  const db = await openStore();
  const tx = db.transaction(['records', 'rejected', 'meta'], 'readwrite', STRICT);
  const rej = tx.objectStore('rejected');
  const row = await rej.get(n);
  if (row) {
    await rej.delete(n);
    const records = tx.objectStore('records');
    const local = await records.get(row.id);
    const s = row.record.stamp;
    if (local && local.stamp.l === s.l && local.stamp.c === s.c && local.device === row.record.device) {
      await records.delete(row.id);
      await tx.objectStore('meta').put(0, 'cursor');
    }
  }
  await tx.done;
  notify({ type: 'changed' });
}

// rejectRows files mutations the hub refused as a whole (a permanent 4xx
// answer), so the queue is never blocked by them.
export async function rejectRows(rows, err) {
  const db = await openStore();
  const tx = db.transaction(['outbox', 'rejected'], 'readwrite', STRICT);
  for (const row of rows) {
    await tx.objectStore('rejected').put({ n: row.n, id: row.record.id, code: err.code || 'BAD_REQUEST', field: err.field || '', reason: err.reason || 'the hub refused this entry', op: row.op, record: row.record, when: Date.now() });
    await tx.objectStore('outbox').delete(row.n);
  }
  await tx.done;
  notify({ type: 'changed', rejected: rows.length });
}

// adoptPairing stores what the hub issued at join: the token, and the
// device id the hub now knows this device by. Entries made before joining
// (still in the outbox, never accepted by a paired hub) are re-labelled
// with the new id in the same transaction, so nothing made offline is lost.
export async function adoptPairing(token, device) {
  const db = await openStore();
  const tx = db.transaction(['records', 'outbox', 'meta'], 'readwrite', STRICT);
  const meta = tx.objectStore('meta');
  const old = await meta.get('deviceId');
  const id = device && device.id ? device.id : old;
  if (old && id !== old) {
    const records = tx.objectStore('records');
    let cur = await tx.objectStore('outbox').openCursor();
    while (cur) {
      const row = cur.value;
      if (row.record.device === old) {
        row.record = { ...row.record, device: id };
        await cur.update(row);
        const local = await records.get(row.record.id);
        if (local && local.device === old) await records.put({ ...local, device: id });
      }
      cur = await cur.continue();
    }
  }
  await meta.put(id, 'deviceId');
  await meta.put(token, 'token');
  if (device) {
    if (device.name) await meta.put(device.name, 'deviceName');
    await meta.put(device.role || '', 'role');
    await meta.put(device.athlete || '', 'athlete');
  }
  await tx.done;
  notify({ type: 'changed', paired: true });
}

// pushBatch reads, in one transaction, what a push needs: the first rows
// of the outbox, how many there are in all, the device id, the epoch and
// the token.
export async function pushBatch(limit) {
  const db = await openStore();
  const tx = db.transaction(['outbox', 'meta']);
  const rows = [];
  let cur = await tx.objectStore('outbox').openCursor();
  while (cur && rows.length < limit) {
    rows.push(cur.value);
    cur = await cur.continue();
  }
  const total = rows.length < limit ? rows.length : await tx.objectStore('outbox').count();
  const meta = tx.objectStore('meta');
  const [device, epoch, token] = [await meta.get('deviceId'), await meta.get('epoch'), await meta.get('token')];
  return { rows, total, device, epoch, token };
}
