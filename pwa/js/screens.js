// Home, morning check-in, session RPE, incident and clearance.
import {
  html, useState, useEffect, useRef, Link, navigate, useAthletes, useAthlete, AthleteSelect, NoAthletes,
  Choice, SaveLine, savedState, useAsync, useVersion, getPicked, setPicked, fmt, savedHere,
} from './ui.js';
import { save, getRecord, byKind, byAthleteDay, getMeta } from './db.js';
import { VOCAB } from './vocab.js';
import { checkBody, fieldOf } from './checks.js';
import { localDay, toKg, fromKg, roundTo, parseNum } from './record.js';
import { useOwnStandDowns, OwnStandDowns } from './restrictions.js';


// useEditing loads the record named by ?edit=, if any.
export function useEditing(kind) {
  const id = new URLSearchParams(location.search).get('edit');
  const rec = useAsync(async () => (id ? getRecord(id) : null), [id], null);
  return id ? (rec && rec.kind === kind && !rec.deleted ? rec : (rec === null ? undefined : null)) : null;
}

export function EditNote({ rec }) {
  if (!rec) return null;
  return html`<p class="muted small" data-testid="editing">Correcting the entry of ${rec.day}. The earlier version is kept in the hub's history.</p>`;
}

// ---------------- home ----------------
const TILES = [
  ['/checkin', 'Morning check-in', 'mass, wellness, sleep', 'nav-checkin'],
  ['/jumps', 'Jump test', 'three attempts per athlete', 'nav-jumps'],
  ['/rounds', 'Rounds', 'one tap per finished round', 'nav-rounds'],
  ['/intervals', 'Intervals', 'prescribed from tests, done against prescribed', 'nav-intervals'],
  ['/tests', 'Tests', '30-15 IFT, sprints, HRmax, strength, drop jumps', 'nav-tests'],
  ['/session', 'Session RPE', 'how hard, how long', 'nav-session'],
  ['/note', 'Note', 'staff only, or shared with the athlete', 'nav-note'],
  ['/incident', 'Incident', 'head knock, knockdown, injury', 'nav-incident'],
  ['/clearance', 'Clearance', 'end a stand-down', 'nav-clearance'],
  ['/rts', 'Return to sport', 'one step a day at most', 'nav-rts'],
  ['/fightweek', 'Fight week', 'weigh-ins, regain, hours to the bout', 'nav-fightweek'],
  ['/today', 'Today', 'entries, corrections', 'nav-today'],
  ['/review', 'Day board', 'flags, decisions, charts', 'nav-review'],
  ['/plan', 'Camp plan', 'bout, weeks, mass path', 'nav-plan'],
  ['/camp', 'Camp set-up', 'athletes, devices, backup', 'nav-camp'],
];

// An athlete's phone logs what the athlete reports (the kinds the hub lets
// it write) and shows its own return to sport, fight week and day.
const ATHLETE_TILES = new Set([...Object.values(VOCAB.kinds).filter((k) => k.writers.includes('athlete') && k.screen).map((k) => k.screen), '/rts', '/fightweek', '/today']);

// Home: on a coach's or staff device (or a hub without pairing) the camp
// at a glance comes first, with the logging tiles right below; on an
// athlete's phone, who is logging and the tiles.
export function Home() {
  const list = useAthletes();
  const [picked, setP] = useState(getPicked());
  const role = useAsync(() => getMeta('role').then((r) => r || ''), [], null);
  const Glance = useAsync(() => (role !== null && role !== 'athlete' ? import('./coach/glance.js').then((m) => ({ C: m.CampGlance })) : Promise.resolve(null)), [role], null);
  const pick = (id) => { setPicked(id); setP(id); };
  const own = useOwnStandDowns(role);
  if (role === null || list === null || !own.ready) return html`<section data-testid="screen-home" data-ready="false"><p class="muted">Loading…</p></section>`;
  const coach = role !== 'athlete';
  const picker = !list.length ? html`<${NoAthletes} />` : html`
      <div class="chips" data-testid="athlete-picker" role="group" aria-label="Athlete">
        ${list.map((a) => html`<button type="button" class="chip" data-testid="athlete-option" data-athlete=${a.id}
          aria-pressed=${picked === a.id ? 'true' : 'false'} onClick=${() => pick(a.id)}>${a.name}</button>`)}
      </div>`;
  const tiles = html`<nav class="tiles">
      ${TILES.filter(([to]) => coach || ATHLETE_TILES.has(to)).map(([to, t, sub, id]) => html`<${Link} to=${to} class="tile" data-testid=${id}>${t}<span>${sub}</span></${Link}>`)}
    </nav>`;
  if (coach) {
    return html`<section data-testid="screen-home" data-ready="true" data-home="camp">
      ${Glance ? html`<${Glance.C} rows=${list.length} />` : html`<div class="camp-glance" style=${`min-height: ${Math.max(1, list.length) * 64 + 60}px`}><h1>The camp today</h1></div>`}
      <h2>Log</h2>
      ${tiles}
      <h2>Who is logging on this device?</h2>
      ${picker}
    </section>`;
  }
  return html`<section data-testid="screen-home" data-ready="true" data-home="athlete">
    <${OwnStandDowns} st=${own} />
    <h1>Who is logging?</h1>
    ${picker}
    <h2>Log</h2>
    ${tiles}
  </section>`;
}

// ---------------- morning check-in ----------------
// Five wellness items, 1–5 with 5 = best (McLean et al. 2010 five-item scale).
export const WELLNESS = [
  ['sleep', 'Sleep quality', ['Very poor', 'Poor', 'Average', 'Good', 'Very good']],
  ['fatigue', 'Energy', ['Exhausted', 'Tired', 'Normal', 'Fresh', 'Very fresh']],
  ['soreness', 'Muscles', ['Very sore', 'Sore', 'Normal', 'Good', 'Not sore']],
  ['stress', 'Stress', ['Very stressed', 'Stressed', 'Normal', 'Relaxed', 'Very relaxed']],
  ['mood', 'Mood', ['Very low', 'Low', 'Normal', 'Good', 'Very good']],
];

export function Checkin() {
  const list = useAthletes();
  const editing = useEditing('checkin');
  const [athlete, pick] = useAthlete(list, editing && editing.athlete);
  const [f, setF] = useState({});
  const [state, setState] = useState(null);
  const set = (k, val) => { setF((o) => ({ ...o, [k]: val })); setState(null); };
  const units = athlete ? athlete.units : 'kg';

  const prefilled = useRef('');
  useEffect(() => {
    // Prefill once per edited record: later syncs must not overwrite typing.
    if (!editing || !list || prefilled.current === editing.id) return;
    prefilled.current = editing.id;
    const b = editing.body || {};
    const a = list.find((x) => x.id === editing.athlete);
    const u = a ? a.units : 'kg';
    setF({
      mass: b.mass_kg != null ? fmt(fromKg(b.mass_kg, u), 1) : '',
      sleep_h: b.sleep_h != null ? String(b.sleep_h) : '',
      rhr: b.rhr_bpm != null ? String(b.rhr_bpm) : '',
      usg: b.usg != null ? String(b.usg) : '',
      note: b.note || '',
      sleep: b.sleep, fatigue: b.fatigue, soreness: b.soreness, stress: b.stress, mood: b.mood,
    });
  }, [editing, list]);

  // Another check-in of the same athlete today: offered for correction
  // rather than saved beside it without a word.
  const today = localDay();
  const v = useVersion();
  const existing = useAsync(async () => {
    if (editing || !athlete) return null;
    const same = (await byAthleteDay(athlete.id, today)).filter((r) => r.kind === 'checkin' && !r.deleted);
    return same.sort((x, y) => (x.at < y.at ? -1 : 1))[0] || null;
  }, [athlete && athlete.id, today, v, editing && editing.id], null);

  if (list && !list.length) return html`<${NoAthletes} />`;

  // bodyOf reads the form: numbers as typed (kg stored), no limits here —
  // the hub's checks run on save, from its registry.
  const bodyOf = () => {
    const body = {};
    const errs = [];
    const num = (k, field, label, conv = (x) => x) => {
      if (!f[k] || !String(f[k]).trim()) return;
      const x = parseNum(f[k]);
      if (!Number.isFinite(x)) errs.push(`${label}: type a number.`);
      else body[field] = conv(x);
    };
    num('mass', 'mass_kg', 'Body mass', (x) => roundTo(toKg(x, units), 3));
    num('sleep_h', 'sleep_h', 'Sleep');
    for (const [k] of WELLNESS) if (f[k]) body[k] = f[k];
    num('rhr', 'rhr_bpm', 'Resting heart rate');
    num('usg', 'usg', 'Urine specific gravity');
    if (f.note && f.note.trim()) body.note = f.note.trim();
    if (errs.length) return { error: errs.join(' ') };
    const bad = checkBody('checkin', body);
    if (bad) {
      const m = bad.field === 'body.mass_kg' && units === 'lb' ? massInLb(bad, parseNum(f.mass)) : bad.reason;
      return { error: bad.field === 'body' ? 'Enter at least one value.' : `${bad.label} ${m}.` };
    }
    return { body };
  };

  const store = async (id, body, day) => {
    setState({ saving: true });
    try {
      await save({ id, kind: 'checkin', athlete: athlete.id, day, body });
      setState(savedState(id && !editing ? `${savedHere()}: today's check-in corrected` : savedHere()));
      if (!editing) setF({});
    } catch (err) {
      setState({ error: `Not saved: ${err.message}` });
    }
  };

  const submit = async (e, second) => {
    if (e) e.preventDefault();
    if (!athlete) return setState({ error: 'Choose the athlete first.' });
    const { body, error } = bodyOf();
    if (error) return setState({ error });
    if (existing && !second) return setState({ twice: true });
    return store(editing && editing.id, body, editing ? editing.day : today);
  };
  // correctExisting keeps today's check-in and puts what was typed over it.
  const correctExisting = () => {
    const { body, error } = bodyOf();
    if (error) return setState({ error });
    return store(existing.id, { ...(existing.body || {}), ...body }, existing.day);
  };

  return html`<form onSubmit=${submit} data-testid="screen-checkin" novalidate>
    <h1>Morning check-in</h1>
    <${EditNote} rec=${editing} />
    ${!editing && html`<${AthleteSelect} list=${list} value=${athlete ? athlete.id : ''} onChange=${pick} />`}
    ${editing && athlete && html`<p><strong>${athlete.name}</strong></p>`}
    <label for="checkin-mass">Body mass</label>
    <div class="unit-input"><input id="checkin-mass" data-testid="checkin-mass" data-unit=${units} inputmode="decimal" autocomplete="off"
      value=${f.mass || ''} onInput=${(e) => set('mass', e.target.value)} placeholder=${units === 'lb' ? 'e.g. 160.4' : 'e.g. 72.8'} />
      <span class="unit" data-testid="checkin-units">${units}</span></div>
    <p class="muted small">Fasted, after using the toilet, same scale and clothing each morning.</p>
    ${WELLNESS.map(([k, label, words]) => html`<label>${label}</label>
      <div class="scale" role="group" aria-label=${label}>
        ${words.map((w, i) => html`<${Choice} value=${i + 1} current=${f[k]} onPick=${(v) => set(k, f[k] === v ? undefined : v)}
          testid=${`wellness-${k}-${i + 1}`}>${i + 1}<small>${w}</small></${Choice}>`)}
      </div>`)}
    <p class="muted small">5 is the best answer for every item.</p>
    <label for="checkin-sleep_h">Sleep last night</label>
    <div class="unit-input"><input id="checkin-sleep_h" data-testid="checkin-sleep_h" inputmode="decimal" value=${f.sleep_h || ''}
      onInput=${(e) => set('sleep_h', e.target.value)} /><span class="unit">hours</span></div>
    <label for="checkin-rhr">Resting heart rate (optional)</label>
    <div class="unit-input"><input id="checkin-rhr" data-testid="checkin-rhr" inputmode="numeric" value=${f.rhr || ''}
      onInput=${(e) => set('rhr', e.target.value)} /><span class="unit">bpm</span></div>
    <label for="checkin-usg">Urine specific gravity, strip reading (optional)</label>
    <input id="checkin-usg" data-testid="checkin-usg" inputmode="decimal" value=${f.usg || ''} placeholder="e.g. 1.015"
      onInput=${(e) => set('usg', e.target.value)} />
    <p class="caution" data-testid="usg-caution">Urine strips misclassify hydration often. The reading is a prompt to talk to the medical team, who decide — not a diagnosis.</p>
    <label for="checkin-note">Note (optional)</label>
    <textarea id="checkin-note" data-testid="checkin-note" value=${f.note || ''} onInput=${(e) => set('note', e.target.value)}></textarea>
    ${state && state.twice && existing ? html`<div class="card" role="alert" data-testid="checkin-existing">
      <p><strong>${athlete.name}</strong> already has a check-in today (${existing.at.slice(11, 16)}${existing.body && existing.body.mass_kg != null ? `, ${fmt(fromKg(existing.body.mass_kg, units), 1)} ${units}` : ''}). The first check-in of the day is the one the flags read.</p>
      <button class="primary" type="button" data-testid="checkin-correct-existing" onClick=${correctExisting}>Correct today's check-in</button>
      <button class="secondary" type="button" data-testid="checkin-save-second" onClick=${() => submit(null, true)}>Save a second check-in</button>
    </div>` : html`<button class="primary" type="submit" data-testid="checkin-save" disabled=${state && state.saving}>${editing ? 'Save correction' : 'Save check-in'}</button>`}
    <${SaveLine} state=${state && !state.twice ? state : null} />
  </form>`;
}

// massInLb words a refused mass for a coach who types pounds.
function massInLb(bad, typed) {
  const f = fieldOf('checkin', 'body.mass_kg');
  return `must be between ${fmt(fromKg(f.min, 'lb'), 1)} and ${fmt(fromKg(f.max, 'lb'), 1)} lb; got ${typed}`;
}

// ---------------- session RPE ----------------
// CR-10 anchors as modified by Foster et al. 2001.
export const CR10 = { 0: 'Rest', 1: 'Very, very easy', 2: 'Easy', 3: 'Moderate', 4: 'Somewhat hard', 5: 'Hard', 7: 'Very hard', 10: 'Maximal' };
const SESSION_TYPES = [['boxing', 'Boxing'], ['spar', 'Sparring'], ['conditioning', 'Conditioning'], ['strength', 'Strength'], ['other', 'Other']];
// A session's focus: the training emphases a plan week names (one list,
// from the hub's vocabulary), and technical work.
const FOCUS = [['', 'No particular focus'], ...VOCAB.emphases.filter((e) => e.id !== 'none').map((e) => [e.id, e.words]), ['technical', 'Technical']];

export function Session() {
  const list = useAthletes();
  const editing = useEditing('session');
  const [athlete, pick] = useAthlete(list, editing && editing.athlete);
  const [f, setF] = useState({ type: 'boxing', focus: '' });
  const [state, setState] = useState(null);
  const set = (k, v) => { setF((o) => ({ ...o, [k]: v })); setState(null); };
  useEffect(() => {
    if (!editing) return;
    const b = editing.body || {};
    setF({ type: b.type || 'other', focus: b.focus || '', minutes: b.minutes != null ? String(b.minutes) : '', rpe: b.rpe, note: b.note || '' });
  }, [editing]);
  if (list && !list.length) return html`<${NoAthletes} />`;
  const minutes = parseNum(f.minutes);
  const load = Number.isFinite(minutes) && f.rpe !== undefined ? f.rpe * minutes : NaN;

  const submit = async (e) => {
    e.preventDefault();
    if (!athlete) return setState({ error: 'Choose the athlete first.' });
    if (f.rpe === undefined) return setState({ error: 'Pick how hard the session was (0–10).' });
    if (!Number.isFinite(minutes)) return setState({ error: 'Duration: type the session\'s length in minutes.' });
    const body = { type: f.type, minutes, rpe: f.rpe };
    if (f.focus) body.focus = f.focus;
    if (f.note && f.note.trim()) body.note = f.note.trim();
    setState({ saving: true });
    try {
      await save({ id: editing && editing.id, kind: 'session', athlete: athlete.id, day: editing ? editing.day : localDay(), body });
      setState(savedState(savedHere()));
      if (!editing) setF({ type: f.type, focus: '' });
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  return html`<form onSubmit=${submit} data-testid="screen-session" novalidate>
    <h1>Session RPE</h1>
    <${EditNote} rec=${editing} />
    ${!editing && html`<${AthleteSelect} list=${list} value=${athlete ? athlete.id : ''} onChange=${pick} />`}
    <label>How hard was the whole session?</label>
    <div class="scale11" role="group" aria-label="Session RPE, 0 to 10">
      ${[10, 9, 8, 7, 6, 5, 4, 3, 2, 1, 0].map((v) => html`<${Choice} value=${v} current=${f.rpe} onPick=${(x) => set('rpe', x)}
        testid=${`rpe-${v}`}><b>${v}</b><small>${CR10[v] || ''}</small></${Choice}>`)}
    </div>
    <p class="muted small">Answer about half an hour after the session, for the session as a whole.</p>
    <label for="session-minutes">Duration</label>
    <div class="unit-input"><input id="session-minutes" data-testid="session-minutes" inputmode="numeric" value=${f.minutes || ''}
      onInput=${(e) => set('minutes', e.target.value)} /><span class="unit">min</span></div>
    <label>Type</label>
    <div class="row" role="group" aria-label="Session type">
      ${SESSION_TYPES.map(([v, l]) => html`<${Choice} value=${v} current=${f.type} onPick=${(x) => set('type', x)} testid=${`session-type-${v}`}>${l}</${Choice}>`)}
    </div>
    <label for="session-focus">Focus</label>
    <select id="session-focus" data-testid="session-focus" value=${f.focus} onChange=${(e) => set('focus', e.target.value)}>
      ${FOCUS.map(([v, l]) => html`<option value=${v}>${l}</option>`)}
    </select>
    <label for="session-note">Note (optional)</label>
    <textarea id="session-note" data-testid="session-note" value=${f.note || ''} onInput=${(e) => set('note', e.target.value)}></textarea>
    <p class="num" data-testid="session-load">Session load: ${Number.isFinite(load) ? `${f.rpe} × ${minutes} min = ${fmt(load, 0)} AU` : '–'}</p>
    <button class="primary" type="submit" data-testid="session-save" disabled=${state && state.saving}>${editing ? 'Save correction' : 'Save session'}</button>
    <${SaveLine} state=${state} />
  </form>`;
}

// ---------------- incident ----------------
export const INCIDENTS = [
  ['head_knock', 'Head knock'], ['knockdown', 'Knockdown'], ['stoppage', 'Stoppage'], ['knockout', 'Knockout'],
  ['knockout_loc', 'Knockout with loss of consciousness'], ['injury', 'Injury'],
];
const HOLD_TYPES = new Set(['head_knock', 'knockdown', 'stoppage', 'knockout', 'knockout_loc']);
export const HOLD_TEXT = 'No sparring or contact until cleared in writing by a doctor.';

export function Incident() {
  const list = useAthletes();
  const editing = useEditing('incident');
  const [athlete, pick] = useAthlete(list, editing && editing.athlete);
  const [type, setType] = useState(undefined);
  const [note, setNote] = useState('');
  const [step, setStep] = useState('form');
  const [state, setState] = useState(null);
  useEffect(() => { if (editing) { setType(editing.body.type); setNote(editing.body.note || ''); } }, [editing]);
  if (list && !list.length) return html`<${NoAthletes} />`;
  const label = (INCIDENTS.find(([v]) => v === type) || [])[1];

  const next = (e) => {
    e.preventDefault();
    if (!athlete) return setState({ error: 'Choose the athlete first.' });
    if (!type) return setState({ error: 'Pick what happened.' });
    setState(null);
    setStep('confirm');
  };
  const confirm = async () => {
    setState({ saving: true });
    try {
      const body = { type };
      if (note.trim()) body.note = note.trim();
      await save({ id: editing && editing.id, kind: 'incident', athlete: athlete.id, day: editing ? editing.day : localDay(), body });
      setState(savedState(savedHere()));
      setStep('done');
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  if (step === 'confirm') {
    return html`<section data-testid="screen-incident-confirm">
      <h1>Log this incident?</h1>
      <div class="card"><p><strong>${athlete.name}</strong>: ${label}</p>${note && html`<p class="muted">${note}</p>`}
      ${HOLD_TYPES.has(type) && html`<p class="hold">This starts a sparring hold for ${athlete.name}. ${HOLD_TEXT}</p>`}</div>
      <button class="primary" type="button" data-testid="incident-confirm" onClick=${confirm} disabled=${state && state.saving}>Yes, log it</button>
      <button class="secondary" type="button" data-testid="incident-back" onClick=${() => setStep('form')}>Go back</button>
      <${SaveLine} state=${state} />
    </section>`;
  }
  if (step === 'done') {
    return html`<section data-testid="screen-incident-done">
      <h1>Incident logged</h1>
      <${SaveLine} state=${state} />
      ${HOLD_TYPES.has(type) && html`<p class="hold" data-testid="incident-hold">${athlete.name}: ${HOLD_TEXT}</p>
        <p class="muted">Treat a head knock or knockdown as a suspected concussion. Return to contact follows the medical team's graded steps.</p>`}
      <button class="secondary" type="button" data-testid="incident-another" onClick=${() => { setStep('form'); setType(undefined); setNote(''); setState(null); navigate('/incident', true); }}>Log another</button>
    </section>`;
  }
  return html`<form onSubmit=${next} data-testid="screen-incident" novalidate>
    <h1>Incident</h1>
    <${EditNote} rec=${editing} />
    ${!editing && html`<${AthleteSelect} list=${list} value=${athlete ? athlete.id : ''} onChange=${pick} />`}
    <label>What happened?</label>
    <div class="row" role="group" aria-label="Incident type">
      ${INCIDENTS.map(([v, l]) => html`<${Choice} value=${v} current=${type} onPick=${setType} testid=${`incident-type-${v}`}>${l}</${Choice}>`)}
    </div>
    <label for="incident-note">What you saw (optional)</label>
    <textarea id="incident-note" data-testid="incident-note" value=${note} onInput=${(e) => setNote(e.target.value)}></textarea>
    <button class="primary" type="submit" data-testid="incident-next">Next</button>
    <${SaveLine} state=${state} />
  </form>`;
}

// ---------------- clearance ----------------
// openIncidents: live incidents with no live clearance naming them.
export async function openIncidents(athleteId) {
  const inc = (await byKind('incident')).filter((r) => !r.deleted && r.athlete === athleteId);
  const cleared = new Set((await byKind('clearance')).filter((r) => !r.deleted).map((r) => r.body && r.body.incident));
  return inc.filter((r) => !cleared.has(r.id)).sort((a, b) => (a.day < b.day ? 1 : -1));
}

export function Clearance() {
  const list = useAthletes();
  const editing = useEditing('clearance');
  const [athlete, pick] = useAthlete(list, editing && editing.athlete);
  const v = useVersion();
  const open = useAsync(async () => (athlete ? openIncidents(athlete.id) : []), [athlete && athlete.id, v], []);
  const [incident, setIncident] = useState(undefined);
  const [by, setBy] = useState('');
  const [note, setNote] = useState('');
  const [state, setState] = useState(null);
  useEffect(() => { if (editing) { setIncident(editing.body.incident); setBy(editing.body.by || ''); setNote(editing.body.note || ''); } }, [editing]);
  if (list && !list.length) return html`<${NoAthletes} />`;
  const name = (t) => (INCIDENTS.find(([x]) => x === t) || [t, t])[1];

  const submit = async (e) => {
    e.preventDefault();
    if (!athlete) return setState({ error: 'Choose the athlete first.' });
    if (!incident) return setState({ error: 'Pick the incident this clearance ends.' });
    if (!by.trim()) return setState({ error: 'Say who gave the written clearance.' });
    const body = { incident, by: by.trim() };
    if (note.trim()) body.note = note.trim();
    setState({ saving: true });
    try {
      await save({ id: editing && editing.id, kind: 'clearance', athlete: athlete.id, day: editing ? editing.day : localDay(), body });
      setState(savedState(savedHere()));
      setIncident(undefined); setBy(''); setNote('');
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };
  return html`<form onSubmit=${submit} data-testid="screen-clearance" novalidate>
    <h1>Clearance</h1>
    ${!editing && html`<${AthleteSelect} list=${list} value=${athlete ? athlete.id : ''} onChange=${pick} />`}
    <p class="caution">Record a clearance only when a doctor has cleared the athlete in writing. Return to sparring follows graded steps.</p>
    <label>Incident</label>
    ${open.length || editing ? html`<div class="row" role="group" aria-label="Incident">
      ${(editing && !open.find((r) => r.id === incident) ? [{ id: incident, day: '', body: { type: 'incident' } }] : []).concat(open).map((r) => html`<${Choice} value=${r.id} current=${incident} onPick=${setIncident}
        testid=${`clearance-incident-${r.id}`}>${name(r.body.type)}<small>${r.day}</small></${Choice}>`)}</div>`
      : html`<p class="muted" data-testid="clearance-none">No open incident for this athlete.</p>`}
    <label for="clearance-by">Cleared in writing by</label>
    <input id="clearance-by" data-testid="clearance-by" value=${by} placeholder="e.g. Dr. A. Example" onInput=${(e) => setBy(e.target.value)} />
    <label for="clearance-note">Note (optional)</label>
    <textarea id="clearance-note" data-testid="clearance-note" value=${note} onInput=${(e) => setNote(e.target.value)}></textarea>
    <button class="primary" type="submit" data-testid="clearance-save" disabled=${state && state.saving}>Save clearance</button>
    <${SaveLine} state=${state} />
  </form>`;
}
