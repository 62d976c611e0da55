// Today: the day's entries per athlete, with correct, delete and restore.
import { html, useState, useEffect, useAsync, useVersion, useAthletes, usePending, navigate, fmt } from './ui.js';
import { byDay, remove, restore, getMeta } from './db.js';
import { localDay, fromKg } from './record.js';
import { INCIDENTS, CR10 } from './screens.js';
import { testLine, targetWords, doneWords } from './testwords.js';

import { VOCAB } from './vocab.js';

// Each kind's words and the screen that corrects it come from the hub's
// registry of record kinds.
const EDIT_ROUTE = Object.fromEntries(Object.entries(VOCAB.kinds).filter(([k, v]) => v.screen && v.dated).map(([k, v]) => [k, v.screen]));
// editRoute: the screen that corrects a record (drop jumps are entered
// with the tests, not on the CMJ grid).
const editRoute = (r) => (r.kind === 'jump' && r.body && r.body.test === 'dj' ? '/tests' : EDIT_ROUTE[r.kind]);
const KIND_NAME = Object.fromEntries(Object.entries(VOCAB.kinds).map(([k, v]) => [k, v.label[0].toUpperCase() + v.label.slice(1)]));
const ACT = { spar: 'sparring', pads: 'pads', bag: 'bag', drill: 'drill', other: 'other' };
const INT = { 1: 'easy', 2: 'moderate', 3: 'hard' };

function shiftDay(day, n) {
  const [y, m, d] = day.split('-').map(Number);
  return localDay(new Date(y, m - 1, d + n));
}

// summary: one line with numbers and units.
export function summary(r, units) {
  const b = r.body || {};
  switch (r.kind) {
    case 'checkin': {
      const parts = [];
      if (b.mass_kg != null) parts.push(`${fmt(fromKg(b.mass_kg, units), 1)} ${units}`);
      const w = ['sleep', 'fatigue', 'soreness', 'stress', 'mood'].filter((k) => b[k] != null);
      if (w.length) parts.push(`wellness ${w.reduce((s, k) => s + b[k], 0)}/${w.length * 5}`);
      if (b.sleep_h != null) parts.push(`slept ${b.sleep_h} h`);
      if (b.rhr_bpm != null) parts.push(`${b.rhr_bpm} bpm`);
      if (b.usg != null) parts.push(`USG ${b.usg.toFixed(3)}`);
      return parts.join(', ');
    }
    case 'fitness_test': case 'strength': return testLine(r);
    case 'jump': {
      if (b.test === 'dj') return testLine(r);
      const v = b.heights_cm && b.heights_cm.length ? b.heights_cm.map((x) => `${fmt(x, 1)} cm`) : (b.flight_ms || []).map((x) => `${x} ms`);
      return `CMJ ${v.join(', ')}${b.best_cm ? ` — best ${fmt(b.best_cm, 1)} cm, mean ${fmt(b.mean_cm, 1)} cm` : ''}`;
    }
    case 'round': return `${ACT[b.activity] || b.activity}, ${INT[b.intensity] || ''}, ${fmt(b.seconds / 60, 0)} min`;
    case 'intervals': {
      const t = targetWords(b);
      const d = doneWords(b);
      return `${b.modality}: ${b.work_s} s / ${b.rest_s} s × ${b.reps}${b.sets > 1 ? ` × ${b.sets} sets` : ''}${t ? ` — prescribed ${t}` : ''}${d ? ` — done ${d}` : (b.rpe != null ? `, RPE ${b.rpe}` : '')}`;
    }
    case 'session': return `${b.type}, ${b.minutes} min, RPE ${b.rpe}${CR10[b.rpe] ? ` (${CR10[b.rpe]})` : ''} = ${fmt(b.rpe * b.minutes, 0)} AU`;
    case 'incident': return (INCIDENTS.find(([v]) => v === b.type) || [b.type, b.type])[1] + (b.note ? ` — ${b.note}` : '');
    case 'clearance': return `cleared by ${b.by}`;
    // Who reads a note, in words: a note without an audience is staff only.
    case 'note': return `${b.text || ''} (${b.audience === 'athlete' ? 'shared with the athlete' : 'staff only'})`;
    default: return fieldSummary(r.kind, b);
  }
}

// fieldSummary is a kind's line from its registry fields: each number with
// its unit, each word as it is.
function fieldSummary(kind, b) {
  const k = VOCAB.kinds[kind];
  if (!k) return '';
  const parts = [];
  for (const f of k.fields) {
    const name = f.path.replace(/^body\./, '');
    if (name.includes('.') || name.includes('[')) continue;
    const v = b[name];
    if (v === undefined || v === null || v === '') continue;
    parts.push(typeof v === 'number' ? `${f.label.toLowerCase()} ${v}${f.unit ? ' ' + f.unit : ''}` : String(v));
  }
  return parts.join(', ');
}

// History lists every version of an entry the hub received, kept or
// overtaken, with the device and the time of each.
function History({ id, units, me }) {
  const [h, setH] = useState(null);
  useEffect(() => {
    let live = true;
    (async () => {
      const token = await getMeta('token');
      const res = await fetch(`/api/records/${encodeURIComponent(id)}/history`, { headers: token ? { Authorization: `Bearer ${token}` } : {}, cache: 'no-store' });
      if (!res.ok) throw new Error(res.status === 404 ? 'the hub has no version of this entry yet' : `the hub answered ${res.status}`);
      return res.json();
    })().then((x) => live && setH(x), (e) => live && setH({ error: e instanceof TypeError ? 'the hub cannot be reached' : e.message }));
    return () => { live = false; };
  }, [id]);
  if (!h) return html`<p class="muted small">Asking the hub…</p>`;
  if (h.error) return html`<p class="muted small" data-testid=${`history-${id}`}>History: ${h.error}.</p>`;
  const when = (v) => { const d = new Date(v.stamp.l); return `${localDay(d)} ${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`; };
  const who = (v) => (v.device === me ? 'this device' : v.device_name || `device ${v.device.slice(0, 8)}`);
  return html`<ol class="history small" data-testid=${`history-${id}`}>
    ${(h.received || []).map((v) => html`<li data-kept=${v.kept ? 'true' : 'false'}><span class="num">${when(v)}</span> · ${who(v)} · ${v.deleted ? 'deleted' : summary(v, units)} · <strong>${v.kept ? 'kept' : 'overtaken'}</strong></li>`)}
  </ol>`;
}

export function Today() {
  const v = useVersion();
  const list = useAthletes() || [];
  const pending = usePending();
  const [day, setDay] = useState(new URLSearchParams(location.search).get('day') || localDay());
  const recs = useAsync(() => byDay(day), [day, v], []);
  const [err, setErr] = useState('');
  const [open, setOpen] = useState('');
  const me = useAsync(() => getMeta('deviceId'), [], '');
  // An athlete's phone changes only what it wrote (the hub refuses the rest).
  const role = useAsync(() => getMeta('role').then((x) => x || ''), [], null);
  const mayChange = (r) => role !== 'athlete' || r.device === me;
  const groups = new Map();
  for (const r of recs.filter((x) => x.kind !== 'athlete').sort((a, b) => (a.at < b.at ? -1 : 1))) {
    const k = r.athlete || '';
    if (!groups.has(k)) groups.set(k, []);
    groups.get(k).push(r);
  }
  const athleteOf = (id) => list.find((a) => a.id === id);
  const act = (fn) => async (id) => { setErr(''); try { await fn(id); } catch (e) { setErr(e.message); } };
  const del = act(remove);
  const undel = act(restore);

  return html`<section data-testid="screen-today">
    <h1>${day === localDay() ? 'Today' : day}</h1>
    <div class="row">
      <button class="secondary" type="button" data-testid="today-prev" onClick=${() => setDay(shiftDay(day, -1))}>← Previous day</button>
      <button class="secondary" type="button" data-testid="today-next" onClick=${() => setDay(shiftDay(day, 1))}>Next day →</button>
    </div>
    ${err && html`<p class="error">${err}</p>`}
    <div data-testid="today-list">
    ${role !== null && groups.size === 0 && html`<p class="muted" data-testid="today-empty">Nothing logged on ${day} on this device yet.</p>`}
    ${role !== null && [...groups.entries()].map(([aid, rs]) => {
      const a = athleteOf(aid);
      return html`<div class="card" data-testid=${`today-athlete-${aid || 'camp'}`}>
        <h2>${a ? a.name : aid ? 'Unknown athlete' : 'Camp'}</h2>
        ${rs.map((r) => {
          const rej = pending.rejected.get(r.id);
          return html`<div class=${`entry${r.deleted ? ' deleted' : ''}`} data-testid=${`entry-${r.id}`} data-kind=${r.kind} data-deleted=${r.deleted ? 'true' : 'false'}>
            <div class="what"><strong>${KIND_NAME[r.kind] || r.kind}</strong> <span class="num">${summary(r, a ? a.units : 'kg')}</span>
              ${pending.waiting.has(r.id) && html`<span class="tag" data-testid=${`waiting-${r.id}`}>waiting to sync</span>`}
              ${rej && html`<span class="tag warn" data-testid=${`rejected-tag-${r.id}`}>${rej.code === 'OVERTAKEN' ? 'your correction was overtaken' : `rejected: ${rej.reason}`}</span>`}
              ${r.deleted && html`<span class="tag">deleted</span>`}</div>
            ${!mayChange(r) ? html`<span class="muted small" data-testid=${`theirs-${r.id}`}>Logged by the coach or staff</span>` : r.deleted
              ? html`<button class="secondary" type="button" data-testid=${`restore-${r.id}`} onClick=${() => undel(r.id)}>Restore</button>`
              : html`${editRoute(r) && html`<button class="secondary" type="button" data-testid=${`edit-${r.id}`} onClick=${() => navigate(`${editRoute(r)}?edit=${r.id}`)}>Edit</button>`}
                <button class="secondary danger" type="button" data-testid=${`delete-${r.id}`} onClick=${() => del(r.id)}>Delete</button>`}
            <button class="secondary" type="button" data-testid=${`history-open-${r.id}`} aria-expanded=${open === r.id ? 'true' : 'false'} onClick=${() => setOpen(open === r.id ? '' : r.id)}>History</button>
            ${open === r.id && html`<${History} id=${r.id} units=${a ? a.units : 'kg'} me=${me} />`}
          </div>`;
        })}
      </div>`;
    })}
    </div>
  </section>`;
}
