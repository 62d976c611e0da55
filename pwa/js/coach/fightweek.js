// Fight week: one fighter's last days, as the hub computed them — day by
// day from 7 days before the weigh-in to the bout, morning mass against the
// planned path, the check weights and the fight-day weigh-in against their
// caps, the official weigh-in, the hours to the bout and the regain. A
// stand-down in force comes first, with its return-to-sport steps. Coach
// and staff log weigh-ins here; an athlete's phone shows its own week.
import { html, useState, useEffect, useRef, useAthletes, Link, SaveLine, savedState, Choice } from '../ui.js';
import { save, getMeta } from '../db.js';
import { toKg, fromKg, roundTo, parseNum, localDay } from '../record.js';
import { useEditing, EditNote } from '../screens.js';
import { hubGet, useHubCopy, onData } from './api.js';
import { mass, fmtN, query, shortDay, isDay } from './common.js';

const TYPES = [['check', 'Check weight'], ['official', 'Official weigh-in'], ['fight_day', 'Fight-day weigh-in']];

// wall shows an RFC 3339 time as the venue's clock reads it, with its offset.
function wall(at) {
  if (!at) return '';
  return `${shortDay(at.slice(0, 10))} ${at.slice(11, 16)} (UTC${at.slice(19) === 'Z' ? '' : at.slice(19)})`;
}

function hours(h) {
  if (h === null || h === undefined || !Number.isFinite(h)) return '–';
  return `${fmtN(h, 1)} h`;
}

// offsetOf keeps a time's own offset ("-07:00"), else this device's.
function localOffset() {
  const m = -new Date().getTimezoneOffset();
  const a = Math.abs(m);
  return `${m >= 0 ? '+' : '-'}${String(Math.floor(a / 60)).padStart(2, '0')}:${String(a % 60).padStart(2, '0')}`;
}

function useFightWeek(id, day, v) {
  const st = useHubCopy(id ? `fightweek.${id}.${day}` : '', () => Promise.all([
    hubGet(query(`/api/athletes/${encodeURIComponent(id)}/fightweek`, { day })),
    hubGet(query(`/api/athletes/${encodeURIComponent(id)}/medical`, { day })),
  ]).then(([fw, med]) => ({ fw, med })), [v]);
  return { fw: null, med: null, ...st.data, error: st.error, loaded: st.loaded };
}

// StandDowns shows every stand-down in force, above everything else, with
// what ends it and the return-to-sport steps so far.
export function StandDowns({ med, units }) {
  const list = ((med && med.stand_downs) || []).filter((s) => s.in_force);
  if (!list.length) return null;
  return html`<div data-testid="fw-standdowns">${list.map((s) => html`
    <div class="hold card" data-testid="fw-standdown" data-incident=${s.incident}>
      <p><strong>Stand-down in force</strong> since ${shortDay(s.day)}: ${s.type.replace(/_/g, ' ')}${s.seen_by ? html`, seen by ${s.seen_by}` : ''}.</p>
      <p>${s.earliest_end ? `No sparring or contact before ${shortDay(s.earliest_end)}` : 'No sparring or contact'}, and only once cleared in writing by a doctor.</p>
      ${s.earliest_end && html`<p class="muted small">${s.rule}</p>`}
      <p data-testid="fw-rts-words">${s.ladder.words}</p>
      <ol class="rts-steps" data-testid="fw-rts-steps">
        ${s.step_names.map((n) => {
          const done = s.steps.filter((x) => x.step === n.step);
          return html`<li data-step=${n.step} data-done=${done.length ? 'true' : 'false'}>
            <span>${done.length ? '✓ ' : ''}Step ${n.step}: ${n.name}</span>
            ${done.map((d) => html`<span class="muted small"> — ${wall(d.at)}, ${d.supervised_by}${d.symptoms ? `; ${d.symptoms}` : ''}</span>`)}
          </li>`;
        })}
      </ol>
      <p class="muted small">${s.rts_caution}</p>
    </div>`)}</div>`;
}

// WeighInForm logs a weigh-in, or corrects one (editing: the record opened
// from Today, its values in the form).
function WeighInForm({ athlete, units, onSaved, editing }) {
  const [type, setType] = useState('check');
  const [massText, setMass] = useState('');
  const [date, setDate] = useState(localDay());
  const [time, setTime] = useState('09:00');
  const [offset, setOffset] = useState(localOffset());
  const [state, setState] = useState(null);
  const prefilled = useRef('');
  const shown = (kg) => fromKg(kg, units).toFixed(1);
  useEffect(() => {
    // Prefill once per corrected weigh-in: later syncs never overwrite typing.
    if (!editing || prefilled.current === editing.id) return;
    prefilled.current = editing.id;
    const b = editing.body || {};
    setType(b.type || 'check');
    setMass(b.mass_kg != null ? shown(b.mass_kg) : '');
    setDate(editing.at.slice(0, 10));
    setTime(editing.at.slice(11, 16));
    const off = editing.at.slice(19);
    setOffset(off === 'Z' || off === '' ? '+00:00' : off);
  }, [editing]);
  const submit = async (e) => {
    e.preventDefault();
    const m = parseNum(massText);
    if (!Number.isFinite(m)) return setState({ error: `Type the mass on the scale in ${units}.` });
    if (!/^[+-]\d\d:\d\d$/.test(offset)) return setState({ error: 'Type the venue\'s offset from UTC, e.g. -07:00 or +01:00.' });
    setState({ saving: true });
    try {
      if (editing) {
        const b = editing.body || {};
        // A mass still reading as it was shown keeps its stored value; the
        // time keeps its seconds unless the day, time or offset changed.
        const massKg = b.mass_kg != null && massText === shown(b.mass_kg) ? b.mass_kg : roundTo(toKg(m, units), 3);
        const off = editing.at.slice(19) === 'Z' ? '+00:00' : editing.at.slice(19);
        const same = editing.at.slice(0, 10) === date && editing.at.slice(11, 16) === time && off === offset;
        const body = { ...b, type, mass_kg: massKg };
        // "made" is derived by the hub when absent: kept only if nothing it depends on changed.
        if (massKg !== b.mass_kg || type !== b.type) delete body.made;
        await save({ id: editing.id, kind: 'weigh_in', athlete: athlete.id, day: date, at: same ? editing.at : `${date}T${time}:00${offset}`, body });
        setState(savedState('Correction saved on this device'));
        onSaved();
        return undefined;
      }
      await save({ kind: 'weigh_in', athlete: athlete.id, day: date, at: `${date}T${time}:00${offset}`, body: { type, mass_kg: toKg(m, units) } });
      setState(savedState('Saved on this phone'));
      setMass('');
      onSaved();
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
    return undefined;
  };
  return html`<form class="card no-print" onSubmit=${submit} data-testid="fw-weighin-form" data-editing=${editing ? editing.id : ''} novalidate>
    <h2>${editing ? 'Correct a weigh-in' : 'Log a weigh-in'}</h2>
    <${EditNote} rec=${editing} />
    <div class="row" role="group" aria-label="Weigh-in">
      ${TYPES.map(([v, l]) => html`<${Choice} value=${v} current=${type} onPick=${setType} testid=${`fw-type-${v}`}>${l}</${Choice}>`)}
    </div>
    <div class="filters">
      <div class="field narrow"><label for="fw-mass">Mass (${units})</label>
        <input id="fw-mass" data-testid="fw-mass" inputmode="decimal" value=${massText} onInput=${(e) => setMass(e.target.value)} /></div>
      <div class="field narrow"><label for="fw-date">Day</label>
        <input id="fw-date" type="date" data-testid="fw-date" value=${date} onChange=${(e) => isDay(e.target.value) && setDate(e.target.value)} /></div>
      <div class="field narrow"><label for="fw-time">Time at the venue</label>
        <input id="fw-time" type="time" data-testid="fw-time" value=${time} onChange=${(e) => setTime(e.target.value)} /></div>
      <div class="field narrow"><label for="fw-offset">Venue's offset from UTC</label>
        <input id="fw-offset" data-testid="fw-offset" value=${offset} onInput=${(e) => setOffset(e.target.value.trim())} /></div>
    </div>
    <button class="primary" type="submit" data-testid="fw-save" disabled=${state && state.saving}>${editing ? 'Save correction' : 'Save weigh-in'}</button>
    <${SaveLine} state=${state} />
  </form>`;
}

export function FightWeek() {
  const p = new URLSearchParams(location.search);
  const list = useAthletes();
  const [role, setRole] = useState(null);
  const [own, setOwn] = useState('');
  useEffect(() => { Promise.all([getMeta('role'), getMeta('athlete')]).then(([r, a]) => { setRole(r || 'coach'); setOwn(a || ''); }); }, []);
  const [id, setId] = useState(p.get('athlete') || '');
  // Correcting a weigh-in from Today opens its fighter and the form with
  // its values, first on the screen.
  const editing = useEditing('weigh_in');
  useEffect(() => { if (editing && editing.athlete !== id) setId(editing.athlete); }, [editing]);
  const [v, setV] = useState(0);
  useEffect(() => onData(() => setV((x) => x + 1), 400), []);
  const athleteID = role === 'athlete' && own ? own : id;
  useEffect(() => { if (role && role !== 'athlete') history.replaceState(null, '', query('/fightweek', { athlete: id, day, edit: new URLSearchParams(location.search).get('edit') || '' })); }, [id, role]);
  const a = (list || []).find((x) => x.id === athleteID);
  const day = isDay(p.get('day')) ? p.get('day') : '';
  const st = useFightWeek(athleteID, day, v);
  const fw = st.fw;
  const units = (fw && fw.units) || (a && a.units) || 'kg';
  // Nothing below the title is drawn until the device's role, the camp's
  // fighters and any entry being corrected are in hand, and then the week
  // with its forms at once: a form never moves under a finger because a
  // "Loading…" line above it went away.
  if (role === null || list === null || editing === undefined) {
    return html`<section class="coach" data-testid="screen-fightweek" data-ready="false"><h1>Fight week</h1><p class="muted" data-testid="fw-loading">Loading…</p></section>`;
  }
  const ready = !athleteID || st.loaded;
  return html`<section class="coach" data-testid="screen-fightweek" data-ready=${ready && fw ? 'true' : 'false'}>
    <h1>Fight week${a ? html` — ${a.name}` : ''}</h1>
    ${role && role !== 'athlete' && html`<div class="filters no-print">
      <div class="field wide">
        <label for="fw-athlete">Athlete</label>
        <select id="fw-athlete" data-testid="fw-athlete" value=${id} onChange=${(e) => setId(e.target.value)}>
          <option value="">Choose…</option>
          ${(list || []).map((x) => html`<option value=${x.id}>${x.name}</option>`)}
        </select>
      </div>
    </div>`}
    ${!athleteID && html`<p class="muted">Choose an athlete to see the fight week.</p>`}
    ${st.error && html`<p class="error" data-testid="fw-error">${fw ? `Showing the last copy: ${st.error}.` : `No fight week: ${st.error}. It is computed by the hub and appears once the hub can be reached.`}</p>`}
    ${athleteID && !st.loaded && html`<p class="muted" data-testid="fw-loading">Loading…</p>`}
    ${fw && html`<${StandDowns} med=${st.med} units=${units} />`}
    ${editing && a && role !== 'athlete' && ready && html`<${WeighInForm} athlete=${a} units=${units} editing=${editing} onSaved=${() => setV((x) => x + 1)} />`}
    ${fw && !fw.bout && html`<p data-testid="fw-nobout">No bout is planned for this fighter.</p>`}
    ${fw && fw.bout && html`<${Week} fw=${fw} units=${units} staff=${!!role && role !== 'athlete'} />`}
    ${fw && fw.bout && a && role && role !== 'athlete' && !editing && html`<${WeighInForm} athlete=${a} units=${units} onSaved=${() => setV((x) => x + 1)} />`}
    ${fw && html`<div class="card muted small" data-testid="fw-cautions">${fw.cautions.map((c) => html`<p>${c}</p>`)}</div>`}
  </section>`;
}

function Week({ fw, units, staff }) {
  const checks = {};
  for (const c of fw.checks) checks[c.id] = c;
  const official = fw.official;
  return html`
    <div class="card" data-testid="fw-summary">
      <p><strong>${fw.bout_name || 'Bout'}</strong> on ${shortDay(fw.bout_day)}${fw.bout_at ? ` at ${fw.bout_at.slice(11, 16)}` : ''}; limit ${fw.limit_kg ? mass(fw.limit_kg, units) : 'none'}.</p>
      <p>Weigh-in ${official ? wall(official.at) : `planned ${wall(fw.weigh_in_planned)}`}${fw.bout_at ? html`; bout ${wall(fw.bout_at)}` : ''}.</p>
      <dl class="fw-numbers">
        <div><dt>Weigh-in to bout</dt><dd data-testid="fw-hours">${hours(fw.hours_weigh_in_to_bout)}${fw.hours_planned ? ' (planned)' : ''}</dd></div>
        ${fw.hours_to_bout !== undefined && fw.hours_to_bout > 0 && html`<div><dt>Bout in</dt><dd data-testid="fw-countdown">${hours(fw.hours_to_bout)}</dd></div>`}
        <div><dt>Official weigh-in</dt><dd data-testid="fw-official">${official ? `${mass(official.mass_kg, units)} — ${official.made ? 'made the limit' : 'did not make the limit'}` : 'not yet'}</dd></div>
        <div><dt>Lost in the last 7 days</dt><dd data-testid="fw-acute">${fw.acute_loss_pct != null ? `${fmtN(fw.acute_loss_pct, 1)} %` : '–'}</dd></div>
        <div><dt>Regain by fight day</dt><dd data-testid="fw-regain">${fw.regain_pct != null ? `${fmtN(fw.regain_pct, 1)} %` : '–'}</dd></div>
      </dl>
      ${fw.words.map((w) => html`<p class="small">${w}</p>`)}
      <p class="small" data-testid="fw-rules">Weigh-in rules: ${fw.rules_words || 'official weigh-in only (no rule set picked on the camp plan).'}</p>
      ${fw.preset && html`<p class="muted small" data-testid="fw-preset">${fw.preset.source} How sure: ${fw.preset.sure}. ${fw.preset.caution}</p>`}
    </div>
    <table class="fw-days" data-testid="fw-days">
      <caption class="muted small">Morning mass against the planned path, and each weigh-in</caption>
      <thead><tr><th scope="col">Day</th><th scope="col">Mass</th><th scope="col">Path</th><th scope="col">Weigh-ins</th></tr></thead>
      <tbody>${fw.days.map((d) => html`<tr data-testid="fw-day" data-day=${d.day} class=${d.is_weigh_in_day || d.is_bout_day ? 'fw-key' : ''}>
        <th scope="row">${shortDay(d.day)}<span class="muted small"> ${d.is_weigh_in_day && d.is_bout_day ? 'weigh-in and bout' : d.is_weigh_in_day ? 'weigh-in day' : d.is_bout_day ? 'bout day' : `${d.days_to_weigh_in} days out`}</span></th>
        <td>${d.morning_kg != null ? mass(d.morning_kg, units) : '–'}</td>
        <td>${d.path_kg != null ? mass(d.path_kg, units) : ''}</td>
        <td>${(d.weigh_ins || []).map((wid) => {
          const c = checks[wid];
          if (c) {
            const mark = c.pass === null || c.pass === undefined ? '' : c.pass ? '✓ ' : '✗ ';
            return html`<div data-testid="fw-check" data-pass=${String(c.pass)}>${mark}${c.reason}</div>`;
          }
          if (official && official.id === wid) return html`<div data-testid="fw-official-row">Official ${mass(official.mass_kg, units)}</div>`;
          return html`<div class="muted">Official (re-weighed)</div>`;
        })}</td>
      </tr>`)}</tbody>
    </table>
    ${fw.checks.filter((c) => !(fw.days || []).some((d) => (d.weigh_ins || []).includes(c.id))).length > 0 && html`
      <div class="card" data-testid="fw-earlier-checks"><h2>Earlier check weights</h2>
        ${fw.checks.filter((c) => !(fw.days || []).some((d) => (d.weigh_ins || []).includes(c.id))).map((c) => html`
          <p data-testid="fw-check" data-pass=${String(c.pass)}>${c.pass === null || c.pass === undefined ? '' : c.pass ? '✓ ' : '✗ '}${c.reason}</p>`)}
      </div>`}
    ${staff && html`<p class="row no-print"><${Link} to=${query('/plan', { athlete: fw.athlete })} class="secondary linkbtn" data-testid="fw-to-plan">Camp plan and weigh-in rules</${Link}></p>`}`;
}
