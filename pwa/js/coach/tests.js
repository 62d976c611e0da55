// Tests that drive prescriptions: enter a 30-15 IFT, repeated sprints, a
// measured maximal heart rate, a strength test or drop jumps for one
// fighter, saved on this device first; and each test's history across
// camps as the hub computed it (derived values and the change from the
// test before, against the test's published noise where it has one).
import {
  html, useState, useEffect, useRef, useAthletes, useAthlete, AthleteSelect, NoAthletes, Choice, SaveLine, savedState,
  useAsync, useVersion,
  savedHere,
} from '../ui.js';
import { save, byKind, getRecord } from '../db.js';
import { localDay, parseNum } from '../record.js';
import { VOCAB } from '../vocab.js';
import { iftStages } from '../checks.js';
import { hubGet, remember, recall } from './api.js';
import { query } from './common.js';


export const TEST_TYPES = [
  ['ift_30_15', '30-15 IFT'], ['repeated_sprint', 'Repeated sprints'], ['hr_max', 'Maximal heart rate'],
  ['strength', 'Strength'], ['dj', 'Drop jumps'],
];
// The 30-15 IFT's stage table (Buchheit 2008), from the hub's vocabulary:
// stage n is run at start + 0.5 × (n − 1) km/h; the hub derives V_IFT the
// same way and stores it.
const LIM = VOCAB.limits;
const STARTS = [LIM.ift_start_kmh, LIM.ift_alt_start_kmh];
export const iftSpeed = (start, stage) => start + LIM.ift_step_kmh * (stage - 1);
const EXERCISES = VOCAB.exercises;
const DEFAULT_MIN_V = LIM.default_min_velocity_ms;
const ROWS = { sprints: 6, sets: 4, dj: 3 };

const num = (s) => (s === undefined || String(s).trim() === '' ? undefined : parseNum(s));

function NumIn({ id, label, unit, value, onInput, hint }) {
  return html`<label for=${id}>${label}</label>
    <div class="unit-input"><input id=${id} data-testid=${id} inputmode="decimal" autocomplete="off" value=${value || ''}
      onInput=${(e) => onInput(e.target.value)} placeholder=${hint || ''} />${unit && html`<span class="unit">${unit}</span>`}</div>`;
}

// bodyOf builds the record body from the form, or {error} naming the field.
function bodyOf(type, f) {
  switch (type) {
    case 'ift_30_15': {
      const start = f.start || 8;
      const st = num(f.stage);
      if (!Number.isInteger(st)) return { error: 'Last stage completed: enter the stage number.' };
      const b = { protocol: 'ift_30_15', stage: st };
      if (start !== 8) b.start_kmh = start;
      if (num(f.hr_peak) !== undefined) b.hr_peak = Math.round(num(f.hr_peak));
      return { kind: 'fitness_test', body: b };
    }
    case 'repeated_sprint': {
      const times = [];
      for (let i = 0; i < f.nSprints; i++) { const t = num(f[`s${i}`]); if (t !== undefined) times.push(t); }
      const b = { protocol: 'repeated_sprint', sprint_s: times };
      if (num(f.distance) !== undefined) b.distance_m = num(f.distance);
      if (num(f.hr_peak) !== undefined) b.hr_peak = Math.round(num(f.hr_peak));
      return { kind: 'fitness_test', body: b };
    }
    case 'hr_max': {
      const v = num(f.hr_max);
      if (v === undefined) return { error: 'Maximal heart rate: enter the highest rate measured.' };
      return { kind: 'fitness_test', body: { protocol: 'hr_max', hr_max_bpm: Math.round(v) } };
    }
    case 'strength': {
      const sets = [];
      for (let i = 0; i < f.nSets; i++) {
        const load = num(f[`load${i}`]); const reps = num(f[`reps${i}`]);
        if (load === undefined && reps === undefined) continue;
        const s = { load_kg: load === undefined ? 0 : load, reps: reps === undefined ? 0 : Math.round(reps) };
        if (num(f[`rir${i}`]) !== undefined) s.rir = Math.round(num(f[`rir${i}`]));
        if (num(f[`mpv${i}`]) !== undefined) s.mpv_ms = num(f[`mpv${i}`]);
        sets.push(s);
      }
      const b = { exercise: (f.exercise || '').trim(), sets };
      if (num(f.min_v) !== undefined) b.min_velocity_ms = num(f.min_v);
      return { kind: 'strength', body: b };
    }
    case 'dj': {
      const flight = [], contact = [];
      for (let i = 0; i < ROWS.dj; i++) {
        const fl = num(f[`fl${i}`]); const ct = num(f[`ct${i}`]);
        if (fl === undefined && ct === undefined) continue;
        flight.push(fl === undefined ? 0 : fl); contact.push(ct === undefined ? 0 : ct);
      }
      const b = { test: 'dj', method: 'mat', flight_ms: flight, contact_ms: contact };
      if (num(f.drop) !== undefined) b.drop_cm = num(f.drop);
      return { kind: 'jump', body: b };
    }
    default: return { error: 'Pick a test.' };
  }
}

// latestMinVelocity: the minimal velocity the exercise's last test used,
// so it is set once per exercise and kept.
function useMinVelocities() {
  const v = useVersion();
  return useAsync(async () => {
    const out = {};
    const recs = (await byKind('strength')).filter((r) => !r.deleted).sort((a, b) => (a.day < b.day ? -1 : 1));
    for (const r of recs) if (r.body && r.body.exercise && r.body.min_velocity_ms) out[r.body.exercise.toLowerCase()] = r.body.min_velocity_ms;
    return out;
  }, [v], {});
}

// formOf fills the form from a stored test, for a correction.
function formOf(r) {
  const b = r.body || {};
  const s = (x) => (x === undefined || x === null ? '' : String(x));
  const f = { start: b.start_kmh || LIM.ift_start_kmh, nSprints: ROWS.sprints, nSets: ROWS.sets, drop: '40' };
  if (r.kind === 'fitness_test') {
    Object.assign(f, { stage: s(b.stage), hr_peak: s(b.hr_peak), hr_max: s(b.hr_max_bpm), distance: s(b.distance_m) });
    (b.sprint_s || []).forEach((x, i) => { f[`s${i}`] = s(x); });
    f.nSprints = Math.max(ROWS.sprints, (b.sprint_s || []).length);
    return [b.protocol, f];
  }
  if (r.kind === 'strength') {
    Object.assign(f, { exercise: b.exercise || '', min_v: s(b.min_velocity_ms) });
    (b.sets || []).forEach((x, i) => { f[`load${i}`] = s(x.load_kg); f[`reps${i}`] = s(x.reps); f[`rir${i}`] = s(x.rir); f[`mpv${i}`] = s(x.mpv_ms); });
    f.nSets = Math.max(ROWS.sets, (b.sets || []).length);
    return ['strength', f];
  }
  f.drop = s(b.drop_cm);
  (b.flight_ms || []).forEach((x, i) => { f[`fl${i}`] = s(x); });
  (b.contact_ms || []).forEach((x, i) => { f[`ct${i}`] = s(x); });
  return ['dj', f];
}

export function Tests() {
  const list = useAthletes();
  const editId = new URLSearchParams(location.search).get('edit');
  const editing = useAsync(async () => (editId ? getRecord(editId) : null), [editId], null);
  const [athlete, pick] = useAthlete(list, editing && editing.athlete);
  const [type, setType] = useState('ift_30_15');
  const [f, setF] = useState({ start: LIM.ift_start_kmh, nSprints: ROWS.sprints, nSets: ROWS.sets, drop: '40' });
  const [state, setState] = useState(null);
  const minVs = useMinVelocities();
  const set = (k, v) => { setF((o) => ({ ...o, [k]: v })); setState(null); };
  const prefilled = useRef('');
  useEffect(() => {
    // Once per edited record: a later sync must not overwrite typing.
    if (!editing || editing.deleted || prefilled.current === editing.id) return;
    prefilled.current = editing.id;
    const [t, g] = formOf(editing);
    setType(t);
    setF(g);
  }, [editing]);
  if (list && !list.length) return html`<${NoAthletes} />`;

  const submit = async (e) => {
    e.preventDefault();
    if (!athlete) return setState({ error: 'Choose the athlete first.' });
    const b = bodyOf(type, f);
    if (b.error) return setState({ error: b.error });
    if (b.kind === 'strength' && b.body.min_velocity_ms === undefined && minVs[b.body.exercise.toLowerCase()]) {
      b.body.min_velocity_ms = minVs[b.body.exercise.toLowerCase()];
    }
    setState({ saving: true });
    try {
      await save({ id: editing && editing.id, kind: b.kind, athlete: athlete.id, day: editing ? editing.day : localDay(), body: b.body });
      setState(savedState(savedHere()));
      if (!editing) setF((o) => ({ start: o.start, nSprints: ROWS.sprints, nSets: ROWS.sets, drop: o.drop, exercise: o.exercise, distance: o.distance }));
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  const start = f.start || 8;
  const st = num(f.stage);
  const speed = Number.isInteger(st) && st >= 1 && st <= iftStages(start) ? iftSpeed(start, st) : null;
  const ex = (f.exercise || '').trim().toLowerCase();
  const minV = num(f.min_v) !== undefined ? num(f.min_v) : (minVs[ex] || DEFAULT_MIN_V);

  return html`<section data-testid="screen-tests">
    <form onSubmit=${submit} novalidate>
      <h1>Tests</h1>
      ${editing ? html`<p class="muted small" data-testid="editing">Correcting ${athlete ? `${athlete.name}'s` : 'the'} test of ${editing.day}. The earlier version is kept in the hub's history.</p>`
        : html`<${AthleteSelect} list=${list} value=${athlete ? athlete.id : ''} onChange=${pick} />`}
      <label>Test</label>
      <div class="row" role="group" aria-label="Test">
        ${TEST_TYPES.map(([k, l]) => html`<${Choice} value=${k} current=${type} onPick=${(v) => { if (!editing) { setType(v); setState(null); } }} testid=${`test-type-${k}`}>${l}</${Choice}>`)}
      </div>
      ${type === 'ift_30_15' && html`
        <label>First stage's speed</label>
        <div class="row" role="group" aria-label="First stage's speed">
          ${STARTS.map((s) => html`<${Choice} value=${s} current=${start} onPick=${(v) => set('start', v)} testid=${`ift-start-${s}`}>${s} km/h</${Choice}>`)}
        </div>
        <${NumIn} id="ift-stage" label=${`Last stage completed (1–${iftStages(start)})`} value=${f.stage} onInput=${(v) => set('stage', v)} hint="e.g. 23" />
        <p class="num" data-testid="ift-speed">${speed !== null ? html`<strong>V_IFT ${speed.toFixed(1)} km/h</strong>` : html`<span class="muted">V_IFT appears here once the stage is entered.</span>`}</p>
        <p class="muted small">30 s shuttles over 40 m with 15 s walking; each stage adds 0.5 km/h. The last stage completed is V_IFT (Buchheit 2008).</p>
        <${NumIn} id="ift-hr" label="Peak heart rate in the test (optional)" unit="bpm" value=${f.hr_peak} onInput=${(v) => set('hr_peak', v)} />`}
      ${type === 'repeated_sprint' && html`
        <${NumIn} id="rs-distance" label="Sprint length" unit="m" value=${f.distance} onInput=${(v) => set('distance', v)} hint="e.g. 30" />
        ${Array.from({ length: f.nSprints }, (_, i) => html`<${NumIn} id=${`rs-time-${i}`} label=${`Sprint ${i + 1}`} unit="s" value=${f[`s${i}`]} onInput=${(v) => set(`s${i}`, v)} />`)}
        ${f.nSprints < 20 && html`<button type="button" class="secondary" data-testid="rs-more" onClick=${() => set('nSprints', f.nSprints + 1)}>One more sprint</button>`}
        <${NumIn} id="rs-hr" label="Peak heart rate (optional)" unit="bpm" value=${f.hr_peak} onInput=${(v) => set('hr_peak', v)} />`}
      ${type === 'hr_max' && html`
        <${NumIn} id="hr-max" label="Highest heart rate measured" unit="bpm" value=${f.hr_max} onInput=${(v) => set('hr_max', v)} hint="e.g. 196" />
        <p class="muted small">A measured maximum (end of a 30-15 IFT or an all-out effort) replaces the age prediction, 208 − 0.7 × age (Tanaka 2001), in heart-rate targets.</p>`}
      ${type === 'strength' && html`
        <label for="st-exercise">Exercise</label>
        <input id="st-exercise" data-testid="st-exercise" list="st-exercises" value=${f.exercise || ''} onInput=${(e) => set('exercise', e.target.value)} autocomplete="off" />
        <datalist id="st-exercises">${EXERCISES.map((x) => html`<option value=${x} />`)}</datalist>
        <table class="sets" data-testid="st-sets"><thead><tr><th aria-label="Set">#</th><th>Load kg</th><th>Reps</th><th>In reserve</th><th>Bar speed m/s</th></tr></thead><tbody>
          ${Array.from({ length: f.nSets }, (_, i) => html`<tr>
            <td>${i + 1}</td>
            ${[['load', 'Load, kg'], ['reps', 'Reps'], ['rir', 'Reps in reserve'], ['mpv', 'Mean propulsive velocity, m/s']].map(([k, l]) => html`<td>
              <input inputmode="decimal" aria-label=${`Set ${i + 1}: ${l}`} data-testid=${`st-${k}-${i}`} value=${f[`${k}${i}`] || ''} onInput=${(e) => set(`${k}${i}`, e.target.value)} /></td>`)}
          </tr>`)}
        </tbody></table>
        ${f.nSets < 20 && html`<button type="button" class="secondary" data-testid="st-more" onClick=${() => set('nSets', f.nSets + 1)}>One more set</button>`}
        <${NumIn} id="st-minv" label="Bar speed at a 1RM for this exercise" unit="m/s" value=${f.min_v} onInput=${(v) => set('min_v', v)} hint=${String(minV)} />
        <p class="muted small">1RM estimates (Epley, Brzycki) come only from sets of at most 10 reps to failure — reps plus reps in reserve (Reynolds 2006). With bar speeds at three or more loads the hub also fits the load–velocity line and reads the 1RM at ${minV} m/s.</p>`}
      ${type === 'dj' && html`
        <${NumIn} id="dj-drop" label="Drop height" unit="cm" value=${f.drop} onInput=${(v) => set('drop', v)} />
        ${Array.from({ length: ROWS.dj }, (_, i) => html`<div class="pair">
          <${NumIn} id=${`dj-flight-${i}`} label=${`Attempt ${i + 1}: flight`} unit="ms" value=${f[`fl${i}`]} onInput=${(v) => set(`fl${i}`, v)} />
          <${NumIn} id=${`dj-contact-${i}`} label=${`Attempt ${i + 1}: ground contact`} unit="ms" value=${f[`ct${i}`]} onInput=${(v) => set(`ct${i}`, v)} />
        </div>`)}
        <p class="muted small">Reactive strength index = jump height ÷ ground contact time (Healy 2017). Drop jumps never enter the CMJ baseline.</p>`}
      <button class="primary" type="submit" data-testid="tests-save" disabled=${state && state.saving}>${editing ? 'Save correction' : 'Save test'}</button>
      <${SaveLine} state=${state} />
    </form>
    ${athlete && html`<${TestHistory} athlete=${athlete} />`}
    <${StrengthLoads} list=${list} />
  </section>`;
}

function useTests(id) {
  const v = useVersion();
  const [st, setSt] = useState({ rep: null, error: '' });
  useEffect(() => {
    if (!id) return undefined;
    let alive = true;
    const key = `tests.${id}`;
    const c = recall(key);
    if (c) setSt({ rep: c.data, cachedAt: c.at, error: '' });
    hubGet(`/api/athletes/${encodeURIComponent(id)}/tests`).then((rep) => {
      if (!alive) return;
      remember(key, rep);
      setSt({ rep, error: '' });
    }, (e) => { if (alive) setSt((o) => ({ ...o, error: e.message })); });
    return () => { alive = false; };
  }, [id, v]);
  return st;
}

// changeWords: the change in words with units, judged against the test's
// published noise when the hub gave one.
export function changeWords(e) {
  const c = e.change;
  if (!c) return 'first test';
  const dec = e.unit === '%' || e.unit === 'm/s' ? 2 : 1;
  const sign = c.delta >= 0 ? '+' : '−';
  const d = `${sign}${Math.abs(c.delta).toFixed(dec)} ${e.unit === '%' ? 'points' : e.unit}`;
  if (!c.te) return `${d} since ${c.from.toFixed(dec)}`;
  const clear = Math.abs(c.delta) > c.limit90;
  return `${d} since ${c.from.toFixed(dec)} — ${clear ? 'beyond' : 'within'} the test's noise (±${c.limit90.toFixed(2)} ${e.unit} at 90 %, ${c.source})`;
}

export function TestHistory({ athlete }) {
  const st = useTests(athlete.id);
  const tests = st.rep ? st.rep.tests : null;
  const groups = {};
  for (const e of tests || []) (groups[e.series] = groups[e.series] || []).push(e);
  const order = TEST_TYPES.map(([k]) => k);
  return html`<section class="card" data-testid="test-history">
    <h2>${athlete.name}: tests across camps</h2>
    ${st.error && html`<p class="muted" data-testid="test-history-offline">${st.rep ? `Shown as of ${new Date(st.cachedAt || Date.now()).toLocaleString()}; ` : ''}the history comes from the hub: ${st.error}.</p>`}
    ${tests && !tests.length && html`<p class="muted">No tests yet.</p>`}
    ${Object.values(groups).sort((a, b) => order.indexOf(a[0].test) - order.indexOf(b[0].test)).map((g) => html`<div class="test-series" data-testid="test-series" data-series=${g[0].series}>
      <h3>${g[0].label}</h3>
      <ul>${g.slice().reverse().map((e) => html`<li data-testid="test-entry" data-test=${e.test}>
        <span class="num">${e.day}</span> ${e.summary}<br /><span class="muted small">${changeWords(e)}</span></li>`)}</ul>
    </div>`)}
  </section>`;
}

// ---- strength loads: a share of each fighter's latest e1RM ----

const PLATE_KG = 2.5; // the bar is loaded in 2.5 kg steps (common practice, no source)

function useLoads(exercise, pct, ids) {
  const [st, setSt] = useState({ targets: null, error: '' });
  useEffect(() => {
    if (!exercise || !(pct > 0) || !ids.length) { setSt({ targets: null, error: '' }); return undefined; }
    let alive = true;
    hubGet(query('/api/prescription', { exercise, pct_1rm: pct, athletes: ids.join(',') })).then((r) => { if (alive) setSt({ targets: r.targets, error: '' }); },
      (e) => { if (alive) setSt({ targets: null, error: e.message }); });
    return () => { alive = false; };
  }, [exercise, pct, ids.join(',')]);
  return st;
}

export function StrengthLoads({ list }) {
  const [exercise, setExercise] = useState(EXERCISES[0]);
  const [pct, setPct] = useState('80');
  const ids = (list || []).map((a) => a.id);
  const p = num(pct);
  const st = useLoads(exercise.trim(), p, ids);
  return html`<section class="card" data-testid="strength-loads">
    <h2>Strength loads from the latest e1RM</h2>
    <label for="sl-exercise">Exercise</label>
    <input id="sl-exercise" data-testid="sl-exercise" list="sl-exercises" value=${exercise} onInput=${(e) => setExercise(e.target.value)} autocomplete="off" />
    <datalist id="sl-exercises">${EXERCISES.map((x) => html`<option value=${x} />`)}</datalist>
    <${NumIn} id="sl-pct" label="Share of the e1RM" unit="%" value=${pct} onInput=${setPct} />
    ${st.error && html`<p class="muted">Loads come from the hub: ${st.error}.</p>`}
    ${st.targets && html`<table class="targets" data-testid="sl-table"><thead><tr><th>Fighter</th><th>Latest e1RM</th><th>Load</th></tr></thead><tbody>
      ${st.targets.map((t) => {
        const kg = t.target_kg;
        const e1 = Object.entries(t.e1rm_kg || {}).find(([k]) => k.toLowerCase() === exercise.trim().toLowerCase());
        return html`<tr data-testid="sl-row" data-athlete=${t.athlete}><td>${t.name}</td>
          <td class="num">${e1 ? `${e1[1].toFixed(1)} kg (${(t.e1rm_day || {})[e1[0]]})` : '—'}</td>
          <td class="num" data-testid=${`sl-load-${t.athlete}`}>${kg ? `${kg.toFixed(1)} kg — ${(Math.round(kg / PLATE_KG) * PLATE_KG).toFixed(1)} kg on the bar` : (t.missing || 'no test yet')}</td></tr>`;
      })}</tbody></table>`}
    <p class="muted small">The e1RM is the latest test's Epley estimate, else its load–velocity 1RM. A load is a starting point: the fighter's bar speed and reps in reserve on the day decide.</p>
  </section>`;
}
