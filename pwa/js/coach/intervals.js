// Conditioning intervals prescribed from tests: pick a template (a share
// of V_IFT for a duration, or a band of HRmax), pick the fighters, see each
// one's distance per repetition or heart-rate band as the hub drew it from
// their latest test, and prescribe; then log what was done against what was
// prescribed (reps done, distance covered, heart rate reached) — on this
// device first, offline if need be.
import {
  html, useState, useEffect, useRef, useAthletes, Choice, SaveLine, savedState, useAsync, useVersion, NoAthletes, plural,
  savedHere,
} from '../ui.js';
import { save, byDay, getRecord } from '../db.js';
import { localDay, parseNum } from '../record.js';
import { VOCAB } from '../vocab.js';
import { hubGet } from './api.js';
import { query } from './common.js';
import { targetWords, doneWords } from '../testwords.js';

const PARAMS = [['work_s', 'Work', 's'], ['rest_s', 'Rest', 's'], ['reps', 'Reps per set', ''], ['sets', 'Sets', ''], ['set_rest_s', 'Rest between sets', 's']];
const num = (s) => (s === undefined || s === null || String(s).trim() === '' ? undefined : parseNum(String(s)));
const r0 = (x) => String(Math.round(x));
const r1 = (x) => (Math.round(x * 10) / 10).toString();

// basisWords: what a template's targets are drawn from.
export function basisWords(p) {
  if (p.pct_vift) return `${p.pct_vift} % of V_IFT`;
  if (p.hr_lo_pct) return `${p.hr_lo_pct}–${p.hr_hi_pct} % of HRmax`;
  return 'no test target';
}

function usePrescription(ids, p, key) {
  const [st, setSt] = useState({ targets: null, error: '' });
  useEffect(() => {
    if (!ids.length || !p) { setSt({ targets: null, error: '' }); return undefined; }
    let alive = true;
    const q = { athletes: ids.join(',') };
    if (p.pct_vift) { q.pct_vift = p.pct_vift; q.work_s = p.work_s; }
    if (p.hr_lo_pct) { q.hr_lo_pct = p.hr_lo_pct; q.hr_hi_pct = p.hr_hi_pct; }
    hubGet(query('/api/prescription', q)).then((r) => { if (alive) setSt({ targets: r.targets, error: '' }); },
      (e) => { if (alive) setSt({ targets: null, error: e.message }); });
    return () => { alive = false; };
  }, [key]);
  return st;
}

export function Intervals() {
  const list = useAthletes();
  // Templates that draw targets from a test first.
  const protocols = [...VOCAB.protocols].sort((a, b) => (b.pct_vift || b.hr_lo_pct ? 1 : 0) - (a.pct_vift || a.hr_lo_pct ? 1 : 0));
  const [pid, setPid] = useState(protocols[0].id);
  const [f, setF] = useState(() => fromTemplate(protocols[0]));
  const [chosen, setChosen] = useState([]);
  const [state, setState] = useState(null);
  const set = (k, v) => { setF((o) => ({ ...o, [k]: v })); setState(null); };
  const pick = (p) => { setPid(p.id); setF(fromTemplate(p)); setState(null); };
  const toggle = (id) => { setChosen((c) => (c.includes(id) ? c.filter((x) => x !== id) : [...c, id])); setState(null); };
  const p = { ...f, work_s: num(f.work_s), pct_vift: num(f.pct_vift), hr_lo_pct: num(f.hr_lo_pct), hr_hi_pct: num(f.hr_hi_pct) };
  const key = [chosen.join(','), p.pct_vift, p.work_s, p.hr_lo_pct, p.hr_hi_pct].join('|');
  const pr = usePrescription(chosen, p, key);
  if (list && !list.length) return html`<${NoAthletes} />`;
  if (!list) return html`<p class="muted">Loading…</p>`;
  const byId = Object.fromEntries((pr.targets || []).map((t) => [t.athlete, t]));

  const prescribe = async (e) => {
    e.preventDefault();
    if (!chosen.length) return setState({ error: 'Pick the fighters first.' });
    const base = { protocol: pid, modality: f.modality };
    for (const [k, l] of PARAMS) {
      const x = num(f[k]);
      if (x === undefined) return setState({ error: `${l}: enter a number.` });
      base[k] = k === 'reps' || k === 'sets' ? Math.round(x) : x;
    }
    setState({ saving: true });
    try {
      for (const id of chosen) {
        const t = byId[id] || {};
        const body = { ...base };
        if (p.pct_vift && t.vift_kmh) Object.assign(body, { pct_vift: p.pct_vift, vift_kmh: t.vift_kmh });
        if (p.hr_lo_pct && t.hr_max_bpm) Object.assign(body, { hr_lo_pct: p.hr_lo_pct, hr_hi_pct: p.hr_hi_pct, hr_max_bpm: t.hr_max_bpm, hr_max_from: t.hr_max_from });
        await save({ kind: 'intervals', athlete: id, day: localDay(), body });
      }
      setState(savedState(`Prescribed for ${plural(chosen.length, 'fighter', 'fighters')} — ${savedHere().toLowerCase()}`));
      setChosen([]);
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  return html`<section data-testid="screen-intervals">
    <form onSubmit=${prescribe} novalidate>
      <h1>Intervals</h1>
      <label>Template</label>
      <div class="row wrap" role="group" aria-label="Template">
        ${protocols.map((x) => html`<${Choice} value=${x.id} current=${pid} onPick=${() => pick(x)} testid=${`intervals-protocol-${x.id}`}>${x.label}<small>${basisWords(x)}</small></${Choice}>`)}
      </div>
      <label>Modality</label>
      <div class="row wrap" role="group" aria-label="Modality">
        ${VOCAB.modalities.map((m) => html`<${Choice} value=${m.id} current=${f.modality} onPick=${(v) => set('modality', v)} testid=${`intervals-modality-${m.id}`}>${m.label}</${Choice}>`)}
      </div>
      <div class="params">
        ${PARAMS.map(([k, l, u]) => html`<label for=${`intervals-${k}`}>${l}</label>
          <div class="unit-input"><input id=${`intervals-${k}`} data-testid=${`intervals-${k}`} inputmode="decimal" value=${f[k] ?? ''}
            onInput=${(e) => set(k, e.target.value)} />${u && html`<span class="unit">${u}</span>`}</div>`)}
        ${f.pct_vift !== undefined && html`<label for="intervals-pct_vift">Share of V_IFT</label>
          <div class="unit-input"><input id="intervals-pct_vift" data-testid="intervals-pct_vift" inputmode="decimal" value=${f.pct_vift ?? ''}
            onInput=${(e) => set('pct_vift', e.target.value)} /><span class="unit">%</span></div>`}
        ${f.hr_lo_pct !== undefined && html`<label>Heart-rate band</label>
          <div class="unit-input"><input aria-label="Lower end, % of HRmax" data-testid="intervals-hr_lo_pct" inputmode="decimal" value=${f.hr_lo_pct ?? ''}
            onInput=${(e) => set('hr_lo_pct', e.target.value)} /><span class="unit">to</span><input aria-label="Upper end, % of HRmax" data-testid="intervals-hr_hi_pct"
            inputmode="decimal" value=${f.hr_hi_pct ?? ''} onInput=${(e) => set('hr_hi_pct', e.target.value)} /><span class="unit">% HRmax</span></div>`}
      </div>
      <p class="num muted" data-testid="intervals-summary">${summaryWords(f)}</p>
      <label>Fighters</label>
      <div class="chips" role="group" aria-label="Fighters">
        ${list.map((a) => html`<button type="button" class="chip" data-testid=${`intervals-athlete-${a.id}`} data-athlete-name=${a.name}
          aria-pressed=${chosen.includes(a.id) ? 'true' : 'false'} onClick=${() => toggle(a.id)}>${a.name}</button>`)}
      </div>
      <button class="primary" type="submit" data-testid="intervals-prescribe" disabled=${(state && state.saving) || !chosen.length}>
        ${chosen.length ? `Prescribe for ${plural(chosen.length, 'fighter', 'fighters')}` : 'Prescribe'}</button>
      <${SaveLine} state=${state} />
      ${chosen.length > 0 && html`<table class="targets" data-testid="intervals-targets">
        <thead><tr><th>Fighter</th><th>Latest test</th><th>Target</th></tr></thead>
        <tbody>${chosen.map((id) => {
          const a = list.find((x) => x.id === id) || { name: id };
          const t = byId[id];
          return html`<tr data-testid="intervals-target" data-athlete=${id}>
            <td>${a.name}</td>
            <td class="num">${t ? testWords(t) : '…'}</td>
            <td class="num" data-testid=${`intervals-target-${id}`}>${t ? (targetWords(bodyPreview(p, t)) || t.missing || 'no target') : pr.error ? 'targets need the hub' : '…'}
              ${t && t.missing && targetWords(bodyPreview(p, t)) && html`<br /><span class="muted small">${t.missing}</span>`}</td>
          </tr>`;
        })}</tbody></table>`}
      <p class="muted small" data-testid="intervals-targets-note">${pr.error ? `Targets come from the hub, which cannot be reached (${pr.error}); a prescription saved now carries no distance or heart-rate target.` : 'Targets are drawn by the hub from each fighter\'s latest test; the record keeps the test value it used.'}</p>
    </form>
    <${TodaysSessions} list=${list} onLog=${() => setState(null)} />
  </section>`;
}

// summaryWords: reps and length of the session as set on the form.
function summaryWords(f) {
  const n = (k) => num(f[k]);
  const total = n('reps') * (n('sets') || 1);
  const min = ((n('work_s') + (n('rest_s') || 0)) * total + ((n('sets') || 1) - 1) * (n('set_rest_s') || 0)) / 60;
  return Number.isFinite(min) && total > 0 ? `${total} reps, about ${Math.round(min)} min in all` : '\u00a0';
}

function fromTemplate(p) {
  const f = { modality: p.modality, work_s: p.work_s, rest_s: p.rest_s, reps: p.reps, sets: p.sets, set_rest_s: p.set_rest_s };
  if (p.pct_vift) f.pct_vift = p.pct_vift;
  if (p.hr_lo_pct) { f.hr_lo_pct = p.hr_lo_pct; f.hr_hi_pct = p.hr_hi_pct; }
  return f;
}

// bodyPreview: the targets the hub drew, in the shape of a record body.
function bodyPreview(p, t) {
  return {
    target_rep_m: t.target_rep_m, pct_vift: p.pct_vift, vift_kmh: t.vift_kmh,
    target_hr_lo: t.target_hr_lo, target_hr_hi: t.target_hr_hi, hr_lo_pct: p.hr_lo_pct, hr_hi_pct: p.hr_hi_pct, hr_max_bpm: t.hr_max_bpm, hr_max_from: t.hr_max_from,
  };
}

function testWords(t) {
  const parts = [];
  if (t.vift_kmh) parts.push(`V_IFT ${r1(t.vift_kmh)} km/h (${t.vift_day})`);
  if (t.hr_max_bpm) parts.push(`HRmax ${r0(t.hr_max_bpm)} bpm${t.hr_max_from === 'age' ? ' (age)' : ''}`);
  return parts.join(', ') || 'no test yet';
}

// ---- the day's sessions: prescribed, and done against prescribed ----

function TodaysSessions({ list, onLog }) {
  const v = useVersion();
  const day = localDay();
  const recs = useAsync(async () => (await byDay(day)).filter((r) => r.kind === 'intervals' && !r.deleted), [v, day], null);
  const editId = new URLSearchParams(location.search).get('edit');
  const [open, setOpen] = useState(editId || '');
  const [saved, setSaved] = useState({ id: '', state: null });
  const edited = useAsync(async () => (editId ? getRecord(editId) : null), [editId], null);
  const rows = (recs || []).slice();
  if (edited && edited.kind === 'intervals' && !rows.some((r) => r.id === edited.id)) rows.unshift(edited);
  const name = (id) => (list.find((a) => a.id === id) || { name: 'Unknown athlete' }).name;
  rows.sort((a, b) => name(a.athlete).localeCompare(name(b.athlete)));
  return html`<section class="card" data-testid="intervals-today">
    <h2>Today's sessions</h2>
    ${recs && !rows.length && html`<p class="muted">Nothing prescribed or logged today.</p>`}
    <ul class="sessions">${rows.map((r) => {
      const b = r.body || {};
      const done = doneWords(b);
      return html`<li data-testid="intervals-session" data-athlete=${r.athlete} data-athlete-name=${name(r.athlete)} data-id=${r.id}>
        <strong>${name(r.athlete)}</strong> — ${b.reps}${b.sets > 1 ? ` × ${b.sets}` : ''} × ${b.work_s} s / ${b.rest_s} s ${b.modality}
        <div class="small" data-testid="intervals-prescribed">Prescribed: ${targetWords(b) || 'no test target'}</div>
        <div class="small" data-testid="intervals-done">${done ? `Done: ${done}` : 'Not logged yet'}</div>
        ${open === r.id ? html`<${DoneForm} rec=${r} onClose=${(st) => { setOpen(''); if (st) setSaved({ id: r.id, state: st }); }} />`
          : html`<button type="button" class="secondary" data-testid="intervals-log-done" onClick=${() => { setOpen(r.id); setSaved({ id: '', state: null }); onLog(); }}>${done ? 'Correct what was done' : 'Log what was done'}</button>`}
        ${saved.id === r.id && html`<${SaveLine} state=${saved.state} />`}
      </li>`;
    })}</ul>
  </section>`;
}

const DONE_FIELDS = [['done_reps', 'Reps completed', 'reps'], ['done_rep_m', 'Distance covered per rep (mean)', 'm'], ['hr_peak', 'Peak heart rate', 'bpm'], ['hr_mean', 'Mean heart rate', 'bpm'], ['rpe', 'Session RPE (0–10)', '']];

function DoneForm({ rec, onClose }) {
  const b = rec.body || {};
  const [f, setF] = useState(() => Object.fromEntries(DONE_FIELDS.map(([k]) => [k, b[k] != null ? String(b[k]) : ''])));
  const [state, setState] = useState(null);
  const first = useRef(null);
  useEffect(() => { if (first.current) first.current.focus({ preventScroll: true }); }, []);
  const submit = async (e) => {
    e.preventDefault();
    const body = { ...b };
    for (const [k] of DONE_FIELDS) {
      const x = num(f[k]);
      if (x === undefined) { delete body[k]; continue; }
      body[k] = k === 'rpe' || k === 'done_rep_m' ? x : Math.round(x);
    }
    setState({ saving: true });
    try {
      await save({ id: rec.id, kind: 'intervals', athlete: rec.athlete, day: rec.day, body });
      onClose(savedState(savedHere()));
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };
  return html`<form class="done-form" data-testid="intervals-done-form" onSubmit=${submit} novalidate>
    ${DONE_FIELDS.map(([k, l, u], i) => html`<label for=${`done-${k}-${rec.id}`}>${l}</label>
      <div class="unit-input"><input id=${`done-${k}-${rec.id}`} ref=${i === 0 ? first : null} data-testid=${`done-${k}`} inputmode="decimal" value=${f[k]}
        onInput=${(e) => { const val = e.target.value; setF((o) => ({ ...o, [k]: val })); setState(null); }} />${u && html`<span class="unit">${u}</span>`}</div>`)}
    <button class="primary" type="submit" data-testid="intervals-done-save" disabled=${state && state.saving}>Save what was done</button>
    <button class="secondary" type="button" onClick=${() => onClose(null)}>Cancel</button>
    <${SaveLine} state=${state} />
  </form>`;
}
