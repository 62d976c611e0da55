// Coach screens: jump grid and rounds ringside (intervals: coach/intervals.js).
import {
  html, useState, useEffect, useAthletes, useAthlete, AthleteSelect, NoAthletes, Choice, SaveLine, savedState,
  useAsync, useVersion, fmt, plural, savedHere, Link,
} from './ui.js';
import { save, remove, getRecord, byDay } from './db.js';
import { localDay, parseNum, attemptStats, heightFromFlightMs } from './record.js';
import { uuidv7 } from './uuid.js';
import { fieldOf } from './checks.js';
import { openIncidents } from './screens.js';
import { useStanding, RoundClock, AthleteChips, useSparGate, RingsideIncident, JumpRef, RingsideRestrictions } from './ringside/index.js';

const ATTEMPTS = 3;

function useEdit(kind) {
  const id = new URLSearchParams(location.search).get('edit');
  const rec = useAsync(async () => (id ? getRecord(id) : null), [id], null);
  return id && rec && rec.kind === kind && !rec.deleted ? rec : null;
}

// ---------------- jump grid ----------------
// Valid ranges, the same as the hub's (records.MinHeightCm…): flight
// 200–1000 ms, typed heights 4.9–122.6 cm (h = g·t²/8 at those times).
const rangeOf = (path) => { const x = fieldOf('jump', path); return [x.min, x.max, x.unit]; };
const RANGE = { height: rangeOf('body.heights_cm[]'), flight: rangeOf('body.flight_ms[]') };

// useTodaysTests: each athlete's CMJ tests of today on this device,
// earliest first. The earliest is the day's monitoring test; a later one
// is shown but does not enter the day's value or the baseline.
function useTodaysTests(day) {
  const v = useVersion();
  return useAsync(async () => {
    const by = {};
    for (const r of await byDay(day)) {
      if (r.kind !== 'jump' || r.deleted || !r.body || (r.body.test && r.body.test !== 'cmj')) continue;
      (by[r.athlete] = by[r.athlete] || []).push(r);
    }
    for (const k of Object.keys(by)) by[k].sort((a, b) => Date.parse(a.at) - Date.parse(b.at));
    return by;
  }, [day, v], {});
}

// testMeanCm: the mean height of a stored test's attempts, in cm.
function testMeanCm(b) {
  if (Number.isFinite(b.mean_cm)) return b.mean_cm;
  const st = attemptStats(Array.isArray(b.heights_cm) && b.heights_cm.length ? b.heights_cm : (b.flight_ms || []).map(heightFromFlightMs));
  return st ? st.mean : null;
}

const clockOf = (at) => { const d = new Date(at); return Number.isFinite(d.getTime()) ? `${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}` : ''; };

// TestedToday: "Tested today at 09:42, mean 41.3 cm", with a way to
// correct that test; typing a new one is labelled as a second test.
function TestedToday({ a, tests, typing }) {
  if (!tests || !tests.length) return null;
  const first = tests[0];
  const m = testMeanCm(first.body);
  return html`<span class="rs-tested" data-testid=${`jump-tested-${a.id}`} data-record=${first.id} data-count=${tests.length}>
    Tested today at ${clockOf(first.at)}${m != null ? `, mean ${fmt(m, 1)} cm` : ''}${tests.length > 1 ? ` (and ${plural(tests.length - 1, 'later test', 'later tests')}, kept out of the baseline)` : ''}.
    <${Link} to=${`/jumps?edit=${encodeURIComponent(first.id)}`} class="secondary linkbtn" data-testid=${`jump-correct-${a.id}`}>Correct that test</${Link}>
    ${typing && html`<b class="rs-second" data-testid=${`jump-second-${a.id}`}>New attempts here save a second test: it is shown, but the first test stays the day's value and the baseline's.</b>`}
  </span>`;
}

export function Jumps() {
  const list = useAthletes();
  const editing = useEdit('jump');
  const tested = useTodaysTests(localDay());
  const [mode, setMode] = useState('height');
  const [method, setMethod] = useState('mat');
  const [cells, setCells] = useState({});
  const standing = useStanding(localDay());
  const [state, setState] = useState(null);
  useEffect(() => {
    if (!editing) return;
    const b = editing.body || {};
    const flight = Array.isArray(b.flight_ms) && b.flight_ms.length;
    setMode(flight ? 'flight' : 'height');
    setMethod(b.method || 'mat');
    const vals = flight ? b.flight_ms : (b.heights_cm || []);
    const c = {};
    vals.forEach((v, i) => { c[`${editing.athlete}:${i}`] = String(v); });
    setCells(c);
  }, [editing]);
  if (list && !list.length) return html`<${NoAthletes} />`;
  if (!list) return html`<p class="muted">Loading…</p>`;
  const rows = editing ? list.filter((a) => a.id === editing.athlete) : list;
  const [lo, hi, unit] = RANGE[mode];

  const valuesOf = (id) => {
    const out = [];
    for (let i = 0; i < ATTEMPTS; i++) {
      const raw = cells[`${id}:${i}`];
      if (raw === undefined || raw.trim() === '') continue;
      out.push(parseNum(raw));
    }
    return out;
  };
  const bad = (raw) => raw && raw.trim() !== '' && !(parseNum(raw) >= lo && parseNum(raw) <= hi);

  const submit = async (e) => {
    e.preventDefault();
    const todo = [];
    for (const a of rows) {
      const v = valuesOf(a.id);
      if (!v.length) continue;
      if (v.some((x) => !(x >= lo && x <= hi))) {
        return setState({ error: `${a.name}: each attempt must be between ${lo} and ${hi} ${unit}.` });
      }
      todo.push([a, v]);
    }
    if (!todo.length) return setState({ error: 'Type at least one attempt.' });
    setState({ saving: true });
    try {
      const session = editing ? (editing.body && editing.body.session) : uuidv7();
      for (const [a, v] of todo) {
        const body = { test: 'cmj', method };
        if (mode === 'height') body.heights_cm = v; else body.flight_ms = v;
        if (session) body.session = session;
        await save({ id: editing && editing.id, kind: 'jump', athlete: a.id, day: editing ? editing.day : localDay(), body });
      }
      const seconds = editing ? 0 : todo.filter(([a]) => (tested[a.id] || []).length > 0).length;
      setState(savedState(`${savedHere()}: ${plural(todo.length, 'jump test', 'jump tests')}${seconds ? ` (${plural(seconds, 'second test', 'second tests')} of the day, kept out of the baseline)` : ''}`));
      if (!editing) setCells({});
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  return html`<form onSubmit=${submit} data-testid="screen-jumps" novalidate>
    <h1>Jump test (CMJ)</h1>
    <div class="row" role="group" aria-label="What the mat shows">
      <${Choice} value="height" current=${mode} onPick=${(m) => { setMode(m); setState(null); }} testid="jump-mode-height">Height, cm</${Choice}>
      <${Choice} value="flight" current=${mode} onPick=${(m) => { setMode(m); setState(null); }} testid="jump-mode-flight">Flight time, ms</${Choice}>
    </div>
    <label for="jump-method">Measured with</label>
    <select id="jump-method" data-testid="jump-method" value=${method} onChange=${(e) => setMethod(e.target.value)}>
      <option value="mat">Jump mat</option><option value="force_plate">Force plate</option><option value="other">Other</option>
    </select>
    <p class="muted small">Hands on hips, land with straight legs. Use the same device for every test: methods differ by a centimetre or more.</p>
    <table class="grid">
      <thead><tr><th>Athlete</th>${Array.from({ length: ATTEMPTS }, (_, i) => html`<th>${i + 1}</th>`)}<th>Mean</th><th>Best</th></tr></thead>
      <tbody>
        ${rows.map((a) => {
          const st = attemptStats(valuesOf(a.id).filter((x) => x >= lo && x <= hi));
          const cm = (x) => (mode === 'flight' ? ` ms (≈ ${fmt(heightFromFlightMs(x), 1)} cm)` : ' cm');
          return html`<tr data-testid=${`jump-row-${a.id}`} data-athlete-name=${a.name}>
            <td>${a.name}<${JumpRef} id=${a.id} standing=${standing} mode=${mode} values=${valuesOf(a.id).filter((x) => x >= lo && x <= hi)} />
              ${!editing && html`<${TestedToday} a=${a} tests=${tested[a.id]} typing=${valuesOf(a.id).length > 0} />`}</td>
            ${Array.from({ length: ATTEMPTS }, (_, i) => {
              const k = `${a.id}:${i}`;
              return html`<td><input inputmode="decimal" autocomplete="off" aria-label=${`${a.name}, attempt ${i + 1}, ${unit}`}
                data-testid=${`jump-${a.id}-${i}`} aria-invalid=${bad(cells[k]) ? 'true' : 'false'} value=${cells[k] || ''}
                onInput=${(e) => { const v = e.target.value; setCells((c) => ({ ...c, [k]: v })); setState(null); }} /></td>`;
            })}
            <td class="stat" data-testid=${`jump-mean-${a.id}`}>${st ? fmt(st.mean, mode === 'flight' ? 0 : 1) + cm(st.mean) : '–'}</td>
            <td class="stat" data-testid=${`jump-best-${a.id}`}>${st ? fmt(st.best, mode === 'flight' ? 0 : 1) + cm(st.best) : '–'}</td>
          </tr>`;
        })}
      </tbody>
    </table>
    <button class="primary" type="submit" data-testid="jumps-save" disabled=${state && state.saving}>${editing ? 'Save correction' : 'Save jump tests'}</button>
    <${SaveLine} state=${state} />
  </form>`;
}

// ---------------- rounds ----------------
const ACTIVITIES = [['spar', 'Sparring'], ['pads', 'Pads'], ['bag', 'Bag'], ['drill', 'Drill'], ['other', 'Other']];
const INTENSITY = [[1, 'Easy'], [2, 'Moderate'], [3, 'Hard']];
const LENGTHS = [[120, '2 min'], [180, '3 min']];

export function Rounds() {
  const list = useAthletes();
  const editing = useEdit('round');
  const v = useVersion();
  const [chosen, setChosen] = useState([]);
  const [activity, setActivity] = useState('spar');
  const [intensity, setIntensity] = useState(2);
  const [seconds, setSeconds] = useState(180);
  const [last, setLast] = useState(null); // ids of the last tap's rounds
  const [state, setState] = useState(null);
  const today = localDay();
  const counts = useAsync(async () => {
    const c = {};
    for (const r of await byDay(today)) if (r.kind === 'round' && !r.deleted) c[r.athlete] = (c[r.athlete] || 0) + 1;
    return c;
  }, [v, today], {});
  const holds = useAsync(async () => {
    const h = {};
    for (const a of list || []) if ((await openIncidents(a.id)).length) h[a.id] = true;
    return h;
  }, [v, list], {});
  const standing = useStanding(today);
  // Ringside appears once the hub has said who is stood down (or could
  // not be reached), so the stand-down strip is above the clock from the
  // first frame instead of pushing it down as the coach reaches for it.
  // A hub that is slow to answer is waited for 1.5 s at most.
  const [waited, setWaited] = useState(false);
  useEffect(() => { const t = setTimeout(() => setWaited(true), 1500); return () => clearTimeout(t); }, []);
  const [tryDone, gatePanel] = useSparGate({ activity, chosen, list: list || [], standing, localHolds: holds, onDone: () => done() });
  useEffect(() => {
    if (!editing) return;
    const b = editing.body || {};
    setChosen([editing.athlete]); setActivity(b.activity || 'other'); setIntensity(b.intensity || 2); setSeconds(b.seconds || 180);
  }, [editing]);
  if (list && !list.length) return html`<${NoAthletes} />`;
  if (!list || (standing.state === 'loading' && !waited)) {
    return html`<section data-testid="screen-rounds" data-ready="false"><h1>Rounds</h1><p class="muted">Asking the hub who is stood down…</p></section>`;
  }
  const toggle = (id) => { setChosen((c) => (c.includes(id) ? c.filter((x) => x !== id) : [...c, id])); setState(null); };

  const done = async () => {
    if (!chosen.length) return setState({ error: 'Tap the athletes in this round first.' });
    setState({ saving: true });
    try {
      const ids = [];
      for (const id of chosen) {
        const rec = await save({ id: editing && editing.id, kind: 'round', athlete: id, day: editing ? editing.day : today, body: { activity, seconds, intensity } });
        ids.push(rec.id);
      }
      setLast(editing ? null : ids);
      const names = chosen.map((id) => (list.find((a) => a.id === id) || {}).name).join(', ');
      setState(savedState(`${savedHere()}: ${editing ? 'round corrected' : `round for ${names}`}`));
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };
  const undo = async () => {
    if (!last) return;
    try {
      for (const id of last) await remove(id);
      setLast(null);
      setState(savedState('Last round removed (it can be restored from Today)'));
    } catch (err) { setState({ error: `Not undone: ${err.message}` }); }
  };

  return html`<section data-testid="screen-rounds" data-ready="true">
    <h1>Rounds</h1>
    <${RingsideRestrictions} list=${list} standing=${standing} day=${today} />
    ${!editing && html`<${RoundClock} onLog=${tryDone} names=${chosen.map((id) => (list.find((a) => a.id === id) || {}).name)} onLength=${setSeconds} />`}
    <label>Who is in this round?</label>
    <${AthleteChips} list=${list} chosen=${chosen} toggle=${toggle} counts=${counts} editing=${editing} standing=${standing} localHolds=${holds} />
    <label>Activity</label>
    <div class="row" role="group" aria-label="Activity">
      ${ACTIVITIES.map(([x, l]) => html`<${Choice} value=${x} current=${activity} onPick=${setActivity} testid=${`round-activity-${x}`}>${l}</${Choice}>`)}
    </div>
    <label>Intensity</label>
    <div class="row" role="group" aria-label="Intensity">
      ${INTENSITY.map(([x, l]) => html`<${Choice} value=${x} current=${intensity} onPick=${setIntensity} testid=${`round-intensity-${x}`}>${l}</${Choice}>`)}
    </div>
    <label>Round length</label>
    <div class="row" role="group" aria-label="Round length">
      ${LENGTHS.map(([x, l]) => html`<${Choice} value=${x} current=${seconds} onPick=${setSeconds} testid=${`round-seconds-${x}`}>${l}</${Choice}>`)}
    </div>
    <button class="primary big" type="button" data-testid="round-done" onClick=${tryDone} disabled=${state && state.saving}>${editing ? 'Save correction' : 'Round done'}</button>
    ${!editing && html`<button class="secondary" type="button" data-testid="round-undo" onClick=${undo} disabled=${!last}>Undo last round</button>`}
    ${gatePanel}
    <${SaveLine} state=${state} />
    ${!editing && html`<${RingsideIncident} list=${list} chosen=${chosen} />`}
  </section>`;
}
