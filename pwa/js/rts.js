// Return to sport: log one step of the graded return after a head incident
// (Patricios et al. 2023: six steps, each at least 24 h after the one
// before). Works offline like every entry: saved on this device, synced
// later; the hub checks the order and the 24 h when it arrives, and a
// refusal is shown with its reason.
import { html, useState, useEffect, useRef, useAthletes, useAthlete, AthleteSelect, NoAthletes, Choice, SaveLine, savedState, useAsync, useVersion } from './ui.js';
import { save, byKind } from './db.js';
import { localDay, rfc3339 } from './record.js';
import { useEditing, EditNote } from './screens.js';

// The six steps in a coach's words, with their boxing reading (REFERENCES
// §11.1); the hub's medical package holds the same table.
export const RTS_STEPS = [
  [1, 'Symptom-limited daily activity', 'Daily activities that do not bring on symptoms; no training.'],
  [2, 'Light, then moderate aerobic exercise', 'Bike or walk, light first (up to 55 % of 220 − age), then moderate (up to 70 %).'],
  [3, 'Individual sport-specific exercise', 'Shadow boxing, skipping, footwork alone; no head-impact risk.'],
  [4, 'Non-contact training drills at high intensity', 'Bag and drills at full intensity; pads with no strikes coming back.'],
  [5, 'Full-contact practice', 'Sparring of any kind — only with a written clearance by a doctor.'],
  [6, 'Return to sport', 'Competition — only with a written clearance by a doctor.'],
];
const HEAD = new Set(['head_knock', 'knockdown', 'stoppage', 'knockout', 'knockout_loc']);
const DAY_MS = 86400000;

// ladder lists an athlete's head incidents (newest first) with their steps.
async function ladders(athleteId) {
  const inc = (await byKind('incident')).filter((r) => !r.deleted && r.athlete === athleteId && HEAD.has(r.body && r.body.type));
  const steps = (await byKind('rts_step')).filter((r) => !r.deleted && r.athlete === athleteId);
  return inc.sort((a, b) => (a.at < b.at ? 1 : -1)).map((r) => ({
    incident: r,
    steps: steps.filter((s) => s.body.incident === r.id).sort((a, b) => Date.parse(a.at) - Date.parse(b.at)),
  }));
}

// offsetOf is an RFC 3339 time's own offset ("+01:00"; "Z" for UTC).
const offsetOf = (at) => (/([+-]\d{2}:\d{2}|Z)$/.exec(at || '') || [])[1] || 'Z';

export function RTS() {
  const list = useAthletes();
  // Correcting a step from Today: the form opens with that step's values.
  const editing = useEditing('rts_step');
  const [athlete, pick] = useAthlete(list, editing && editing.athlete);
  const v = useVersion();
  const all = useAsync(async () => (athlete ? ladders(athlete.id) : null), [athlete && athlete.id, v], null);
  const [incident, setIncident] = useState('');
  const [step, setStep] = useState(0);
  const [symptoms, setSymptoms] = useState('');
  const [by, setBy] = useState('');
  const [state, setState] = useState(null);
  // when: the corrected step's day and time on its own clock (a new step
  // is stamped when it is saved).
  const [when, setWhen] = useState({ date: '', time: '' });
  const prefilled = useRef('');
  useEffect(() => {
    // Prefill once per corrected step: later syncs never overwrite typing.
    if (!editing || prefilled.current === editing.id) return;
    prefilled.current = editing.id;
    const b = editing.body || {};
    setIncident(b.incident || '');
    setStep(b.step || 1);
    setSymptoms(b.symptoms || '');
    setBy(b.supervised_by || '');
    setWhen({ date: editing.at.slice(0, 10), time: editing.at.slice(11, 16) });
  }, [editing]);
  const lad = (all || []).find((l) => l.incident.id === incident) || (all && all[0]);
  useEffect(() => { if (lad && incident !== lad.incident.id && !editing) setIncident(lad.incident.id); }, [lad && lad.incident.id]);
  // The steps before this one: all of the incident's for a new step; for a
  // correction, those logged before the step's time, itself left out.
  const editAt = editing && when.date ? Date.parse(`${when.date}T${when.time || '00:00'}:00${offsetOf(editing.at)}`) : NaN;
  const before = lad ? lad.steps.filter((x) => !editing || (x.id !== editing.id && Date.parse(x.at) < editAt)) : [];
  const last = before[before.length - 1];
  const next = last ? Math.min(6, last.body.step + 1) : 1;
  useEffect(() => { if (!editing) setStep(next); }, [lad && lad.incident.id, next]);
  if (list && !list.length) return html`<${NoAthletes} />`;
  const earliest = last ? Date.parse(last.at) + DAY_MS : 0;
  const tooSoon = last && (editing ? editAt : Date.now()) < earliest;

  const submit = async (e) => {
    e.preventDefault();
    if (!athlete) return setState({ error: 'Choose the athlete first.' });
    if (!lad) return setState({ error: 'This athlete has no head incident to return from.' });
    if (!by.trim()) return setState({ error: 'Say who supervised the step.' });
    setState({ saving: true });
    try {
      const body = { incident: lad.incident.id, step, supervised_by: by.trim() };
      if (symptoms.trim()) body.symptoms = symptoms.trim();
      if (editing) {
        if (!/^\d{4}-\d{2}-\d{2}$/.test(when.date) || !/^\d{2}:\d{2}$/.test(when.time)) return setState({ error: 'Pick the day and time of the step.' });
        // The step's own time stays as it was unless the day or time changed.
        const same = editing.at.slice(0, 10) === when.date && editing.at.slice(11, 16) === when.time;
        const at = same ? editing.at : `${when.date}T${when.time}:00${offsetOf(editing.at)}`;
        await save({ id: editing.id, kind: 'rts_step', athlete: athlete.id, day: when.date, at, body });
        setState(savedState('Correction saved on this phone'));
        return undefined;
      }
      await save({ kind: 'rts_step', athlete: athlete.id, day: localDay(), at: rfc3339(), body });
      setState(savedState('Saved on this phone'));
      setSymptoms('');
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  return html`<form onSubmit=${submit} data-testid="screen-rts" novalidate>
    <h1>Return to sport</h1>
    <${EditNote} rec=${editing} />
    ${!editing && html`<${AthleteSelect} list=${list} value=${athlete ? athlete.id : ''} onChange=${pick} />`}
    ${editing && athlete && html`<p><strong>${athlete.name}</strong></p>`}
    ${athlete && all && !all.length && html`<p class="muted" data-testid="rts-none">No head incident is recorded for ${athlete.name}.</p>`}
    ${all && all.length > 1 && !editing && html`<label for="rts-incident">After which incident?</label>
      <select id="rts-incident" data-testid="rts-incident" value=${incident} onChange=${(e) => setIncident(e.target.value)}>
        ${all.map((l) => html`<option value=${l.incident.id}>${l.incident.day}: ${l.incident.body.type.replace(/_/g, ' ')}</option>`)}
      </select>`}
    ${lad && html`
      <p data-testid="rts-so-far">${last ? `${editing ? 'Before this one: step' : 'Step'} ${last.body.step} of 6 on ${last.at.slice(0, 10)} ${last.at.slice(11, 16)}.` : editing ? 'No step logged before this one.' : 'No step logged yet.'}
        ${last && next <= 6 && !editing && ` Step ${next} from ${new Date(earliest).toLocaleString()} at the earliest.`}</p>
      ${editing && html`<div class="filters">
        <div class="field narrow"><label for="rts-date">Day of the step</label>
          <input id="rts-date" type="date" data-testid="rts-date" value=${when.date} onInput=${(e) => setWhen((o) => ({ ...o, date: e.target.value }))} /></div>
        <div class="field narrow"><label for="rts-time">Time (${offsetOf(editing.at) === 'Z' ? 'UTC' : `UTC${offsetOf(editing.at)}`})</label>
          <input id="rts-time" type="time" data-testid="rts-time" value=${when.time} onInput=${(e) => setWhen((o) => ({ ...o, time: e.target.value }))} /></div>
      </div>`}
      <label>Step</label>
      <div class="rts-choices" role="group" aria-label="Step">
        ${RTS_STEPS.map(([n, name]) => html`<${Choice} value=${n} current=${step} onPick=${setStep} testid=${`rts-step-${n}`}>${n}. ${name}</${Choice}>`)}
      </div>
      <p class="muted small" data-testid="rts-step-words">${(RTS_STEPS[step - 1] || [])[2]}</p>
      ${tooSoon && html`<p class="hold" data-testid="rts-too-soon">Less than 24 h ${editing ? 'after' : 'since'} step ${last.body.step}: each step takes at least 24 h. The hub will refuse it.</p>`}
      <label for="rts-symptoms">Symptoms (in words)</label>
      <textarea id="rts-symptoms" data-testid="rts-symptoms" value=${symptoms} onInput=${(e) => setSymptoms(e.target.value)}></textarea>
      <label for="rts-by">Supervised by</label>
      <input id="rts-by" data-testid="rts-by" value=${by} onInput=${(e) => setBy(e.target.value)} />
      <button class="primary" type="submit" data-testid="rts-save" disabled=${state && state.saving}>${editing ? `Save correction (step ${step})` : `Log step ${step}`}</button>`}
    <${SaveLine} state=${state} />
    <p class="muted small">The medical team sets the pace. Go back a step if symptoms return; no sparring or contact until cleared in writing by a doctor.</p>
  </form>`;
}
