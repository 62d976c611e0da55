// Camp plan: one fighter's bout set-up, the week-by-week load levels and
// sparring caps, and the planned mass path. The hub generates the default
// plan and checks it in plain words; the bout is saved as a record through
// the device's store like every other entry.
import { html, useState, useEffect, useRef, useAthletes, useVersion, useAsync, Link, SaveLine, savedState, Choice } from '../ui.js';
import { save, byKind } from '../db.js';
import { VOCAB } from '../vocab.js';
import { fieldWords } from '../checks.js';
import { toKg, roundTo, parseNum } from '../record.js';
import { hubGet, hubPost, getTables } from './api.js';
import { onStatus } from '../sync.js';
import { addDays, isDay, today, longDay, shortDay, query, mass, massNum, fmtN, MASS_CAUTION } from './common.js';
import { BoutRules, usePresets, rulesForm, rulesBody } from './boutrules.js';

const LEVEL_WORDS = { rest: 'Rest', low: 'Low', medium: 'Medium', medium_heavy: 'Medium–heavy', heavy: 'Heavy', taper: 'Taper' };
// The emphases of each group and their words come from the hub's
// vocabulary (one list, shared with a session's focus).
const EMPH_GROUP = { strength: VOCAB.emphases.filter((e) => e.groups.includes('strength')).map((e) => e.id), conditioning: VOCAB.emphases.filter((e) => e.groups.includes('conditioning')).map((e) => e.id) };
const emphWords = (_tables, id) => VOCAB.emphases.find((e) => e.id === id)?.words || (id === 'technical' ? 'Technical' : id);
const emphText = (tables, e) => (!e ? '' : e.label || (e.ids || []).map((id) => emphWords(tables, id)).join(' + '));
const MON = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];
const dayMonth = (d) => `${+d.slice(8, 10)} ${MON[+d.slice(5, 7) - 1]}`;
const dayOfNumber = (n) => new Date(n * 86400000).toISOString().slice(0, 10);

// zoneOffset is the UTC offset (minutes) of an IANA zone at a wall-clock
// time there, found with the browser's own time-zone data.
export function zoneOffset(zone, date, time) {
  const [y, mo, d] = date.split('-').map(Number);
  const [hh, mm] = time.split(':').map(Number);
  const wall = Date.UTC(y, mo - 1, d, hh, mm);
  const fmt = new Intl.DateTimeFormat('en-US', { timeZone: zone, hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit' });
  const at = (ms) => {
    const p = Object.fromEntries(fmt.formatToParts(new Date(ms)).map((x) => [x.type, x.value]));
    return (Date.UTC(+p.year, +p.month - 1, +p.day, +p.hour % 24, +p.minute) - ms) / 60000;
  };
  let off = at(wall);
  off = at(wall - off * 60000);
  return off;
}

export function weighInRFC3339(zone, date, time) {
  const off = zoneOffset(zone, date, time);
  const a = Math.abs(off);
  const pad = (n) => String(n).padStart(2, '0');
  return `${date}T${time}:00${off >= 0 ? '+' : '-'}${pad(Math.floor(a / 60))}:${pad(a % 60)}`;
}

// wallClock is the date and time of an RFC 3339 instant on a zone's clock.
function wallClock(wi, zone) {
  const t = Date.parse(wi);
  if (!Number.isFinite(t)) return { date: wi.slice(0, 10), time: wi.slice(11, 16) || '09:00' };
  try {
    const p = Object.fromEntries(new Intl.DateTimeFormat('en-US', { timeZone: zone, hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit' })
      .formatToParts(new Date(t)).map((x) => [x.type, x.value]));
    return { date: `${p.year}-${p.month}-${p.day}`, time: `${String(+p.hour % 24).padStart(2, '0')}:${p.minute}` };
  } catch (_) {
    return { date: wi.slice(0, 10), time: wi.slice(11, 16) || '09:00' };
  }
}

// zoneOfOffset names a fixed-offset zone for a stored weigh-in that came
// without its venue zone, so re-saving keeps the same instant.
function zoneOfOffset(wi) {
  const m = /(Z|([+-])(\d{2}):(\d{2}))$/.exec(wi || '');
  if (!m) return '';
  if (m[1] === 'Z' || (m[3] === '00' && m[4] === '00')) return 'UTC';
  if (m[4] !== '00') return '';
  const h = Number(m[3]);
  return `Etc/GMT${m[2] === '+' ? '-' : '+'}${h}`; // POSIX sign: Etc/GMT-1 is UTC+1
}

const deviceZone = () => { try { return Intl.DateTimeFormat().resolvedOptions().timeZone || 'UTC'; } catch (_) { return 'UTC'; } };
const zones = () => { try { return Intl.supportedValuesOf('timeZone'); } catch (_) { return ['UTC']; } };

// formFromBout fills the form from a stored bout record.
function formFromBout(b, units) {
  const wi = b.weigh_in || '';
  const zone = b.weigh_in_zone || zoneOfOffset(wi) || deviceZone();
  const wall = wallClock(wi, zone);
  return {
    name: b.name || '', camp_start: b.camp_start || '', bout_day: b.bout_day || '',
    wi_date: wall.date, wi_time: wall.time, zone,
    weigh_in_type: b.weigh_in_type || 'day_before', weight_class: b.weight_class || (b.limit_kg ? 'custom' : ''),
    limit: b.weight_class === 'custom' || !b.weight_class ? (b.limit_kg ? fmtN(massNum(b.limit_kg, units), 1) : '') : '',
    start_mass: b.start_mass_kg ? fmtN(massNum(b.start_mass_kg, units), 1) : '', start_mass_kg: b.start_mass_kg, limit_kg: b.limit_kg, ref_load: b.reference_load_au ? String(b.reference_load_au) : '',
    weeks: (b.weeks || []).map(weekForm), knots: (b.path || []).map((k) => ({ day: k.day, mass: fmtN(massNum(k.mass_kg, units), 1) })),
    bout_time: b.bout_at ? wallClock(b.bout_at, zone).time : '', rules: rulesForm(b.rules), stand_down_sets: b.stand_down_sets || [],
  };
}

// weekForm turns a stored week into the form's week (travel as wall-clock
// dates and times on each end's own clock).
function weekForm(w) {
  if (!w.travel) return { ...w };
  const t = w.travel;
  const dep = wallClock(t.depart_at, t.from_zone);
  const arr = wallClock(t.arrive_at, t.to_zone);
  return { ...w, travel: { dep_date: dep.date, dep_time: dep.time, arr_date: arr.date, arr_time: arr.time, from_zone: t.from_zone, to_zone: t.to_zone } };
}

function blank() {
  const start = addDays(today(), 7);
  return { name: '', camp_start: start, bout_day: '', wi_date: '', wi_time: '09:00', zone: deviceZone(), weigh_in_type: 'day_before', weight_class: '', limit: '', start_mass: '', ref_load: '', weeks: [], knots: [], bout_time: '', rules: null, stand_down_sets: [] };
}

// keptKg is a mass typed in the form in kg: the stored value itself while
// the text still reads as it was shown, so saving a plan never moves a
// mass nobody touched by a round trip through the displayed decimals.
function keptKg(text, storedKg, units) {
  if (storedKg && text === fmtN(massNum(storedKg, units), 1)) return storedKg;
  return roundTo(toKg(parseNum(text), units), 3);
}

// bodyFromForm builds the bout body, or lists what is missing.
function bodyFromForm(f, units) {
  const errs = [];
  const b = {};
  if (f.name.trim()) b.name = f.name.trim();
  if (!isDay(f.camp_start)) errs.push('Camp start: pick the first day of the camp.'); else b.camp_start = f.camp_start;
  if (!isDay(f.bout_day)) errs.push('Bout day: pick the day of the bout.'); else b.bout_day = f.bout_day;
  if (!isDay(f.wi_date) || !/^\d{2}:\d{2}$/.test(f.wi_time)) errs.push('Weigh-in: pick its date and time.');
  else {
    try { b.weigh_in = weighInRFC3339(f.zone, f.wi_date, f.wi_time); b.weigh_in_zone = f.zone; } catch (_) { errs.push(`Weigh-in time zone: "${f.zone}" is not a time zone this device knows (e.g. Europe/Lisbon).`); }
  }
  b.weigh_in_type = f.weigh_in_type;
  if (f.bout_time && b.weigh_in && b.bout_day) {
    if (!/^\d{2}:\d{2}$/.test(f.bout_time)) errs.push('Bout start: pick the time the bout starts, or leave it empty.');
    else b.bout_at = weighInRFC3339(f.zone, b.bout_day, f.bout_time);
  }
  if (!f.weight_class) errs.push('Weight class: pick a class or "custom limit".');
  else if (f.weight_class === 'custom') {
    const v = parseNum(f.limit);
    if (!Number.isFinite(v)) errs.push(`Custom limit: type the weigh-in limit in ${units}.`);
    else { b.weight_class = 'custom'; b.limit_kg = keptKg(f.limit, f.limit_kg, units); }
  } else b.weight_class = f.weight_class;
  const sm = parseNum(f.start_mass);
  if (!Number.isFinite(sm)) errs.push(`Start mass: type the morning mass at camp start in ${units}.`); else b.start_mass_kg = keptKg(f.start_mass, f.start_mass_kg, units);
  if (f.ref_load !== '') {
    const r = parseNum(f.ref_load);
    if (!Number.isFinite(r) || r < 0) errs.push('Reference weekly load: a number of AU per week (session RPE × minutes, summed over a usual heavy week).');
    else b.reference_load_au = r;
  }
  if (f.weeks.length) {
    b.weeks = f.weeks.map((w, i) => {
      const o = { week: i + 1, level: w.level };
      for (const k of ['spar_cap_rounds', 'spar_rounds', 'hard_rounds']) if (w[k] !== undefined && w[k] !== '' && w[k] !== null) o[k] = Number(w[k]);
      for (const k of ['strength', 'conditioning']) if (w[k] && ((w[k].ids && w[k].ids.length) || w[k].label)) o[k] = w[k];
      if (w.note) o.note = w.note;
      if (w.travel) {
        const t = w.travel;
        if (!isDay(t.dep_date) || !isDay(t.arr_date) || !t.from_zone || !t.to_zone) errs.push(`Week ${i + 1} travel: fill in leaving and landing (date, time, time zone).`);
        else {
          try { o.travel = { depart_at: weighInRFC3339(t.from_zone, t.dep_date, t.dep_time || '09:00'), arrive_at: weighInRFC3339(t.to_zone, t.arr_date, t.arr_time || '18:00'), from_zone: t.from_zone, to_zone: t.to_zone }; } catch (_) { errs.push(`Week ${i + 1} travel: a time zone this device does not know (e.g. Europe/Lisbon).`); }
        }
      }
      return o;
    });
  }
  if (f.knots.length) {
    const ks = [];
    f.knots.forEach((k, i) => {
      const v = parseNum(k.mass);
      if (!isDay(k.day) || !Number.isFinite(v)) errs.push(`Path point ${i + 1}: needs a day and a mass in ${units}.`);
      else ks.push({ day: k.day, mass_kg: roundTo(toKg(v, units), 3) });
    });
    b.path = ks;
  }
  const rules = rulesBody(f.rules, errs);
  if (rules) b.rules = rules;
  if (f.stand_down_sets && f.stand_down_sets.length) b.stand_down_sets = [...f.stand_down_sets];
  return { body: b, errs };
}

// useBouts: the fighter's bouts on this device, latest first; readAt is
// when they were read, so the screen knows whether a completed sync came
// before the read. It reads again after each sync.
function useBouts(athlete, lastSync) {
  const v = useVersion();
  return useAsync(async () => {
    const readAt = Date.now();
    const out = athlete ? (await byKind('bout')).filter((r) => r.athlete === athlete && !r.deleted).sort((a, b) => (b.body.bout_day || '').localeCompare(a.body.bout_day || '')) : [];
    out.readAt = readAt;
    return out;
  }, [athlete, v, lastSync], null);
}

// useLastSync: when this device last completed a sync with the hub (0: never).
function useLastSync() {
  const [t, set] = useState(0);
  useEffect(() => onStatus((s) => set(s.lastSync || 0)), []);
  return t;
}

export function Plan() {
  const p = new URLSearchParams(location.search);
  const list = useAthletes();
  const [aid, setAid] = useState(p.get('athlete') || '');
  const a = (list || []).find((x) => x.id === aid);
  const units = a ? a.units : 'kg';
  const lastSync = useLastSync();
  const bouts = useBouts(aid, lastSync);
  const [boutId, setBoutId] = useState(p.get('bout') || '');
  const [f, setF] = useState(blank);
  const [loadedFor, setLoadedFor] = useState('');
  const tables = useAsync(() => getTables().catch(() => null), [], null);
  const presets = usePresets();
  const [check, setCheck] = useState(null);
  const [state, setState] = useState(null);
  const [gen, setGen] = useState(null);
  // touched: the coach has typed into the form shown; a bout that arrives
  // by sync afterwards never replaces what was typed.
  const [touched, setTouched] = useState(false);

  useEffect(() => { history.replaceState(null, '', query('/plan', { athlete: aid, bout: boutId })); }, [aid, boutId]);
  // Open the fighter's current bout (or the one asked for) once it is known.
  useEffect(() => {
    if (!bouts || !a) return;
    // The fighter's bout arrived (by sync) after a blank form nobody typed in: open it.
    const arrived = boutId === '' && bouts.length > 0 && !touched;
    if (loadedFor === aid + '|' + boutId && !arrived) return;
    const r = boutId === 'new' ? null : (bouts.find((x) => x.id === boutId) || bouts[0]);
    // A fighter with no bout on this device may have one on the hub that
    // has not arrived yet: wait for a sync read after, never offer a blank
    // form that would become a second bout.
    if (!r && boutId !== 'new' && !(lastSync > 0 && bouts.readAt >= lastSync)) return;
    setF(r ? formFromBout(r.body, units) : blank());
    if (r && boutId !== r.id) setBoutId(r.id);
    setLoadedFor(aid + '|' + (r ? r.id : boutId));
    setState(null);
  }, [bouts, a, aid, boutId, lastSync]);
  const waiting = !!aid && boutId !== 'new' && loadedFor !== aid + '|' + boutId;

  const set = (k, v) => { setF((o) => ({ ...o, [k]: v })); setState(null); setTouched(true); };
  // A new bout starts blank at once, so what is typed next stays even if
  // the fighter's bouts finish loading afterwards.
  const pickBout = (id) => {
    setBoutId(id);
    setTouched(false);
    if (id === 'new') { setF(blank()); setLoadedFor(aid + '|new'); setState(null); } else setLoadedFor('');
  };
  const { body, errs } = bodyFromForm(f, units);

  // Ask the hub to check the plan as it is edited.
  const timer = useRef(null);
  useEffect(() => {
    clearTimeout(timer.current);
    if (errs.length) { setCheck(null); return; }
    timer.current = setTimeout(() => {
      hubPost('/api/plan/check', { athlete: aid, bout: body }).then((c) => setCheck({ ...c, for: JSON.stringify(body) }), (e) => setCheck({ error: e.message }));
    }, 300);
  }, [JSON.stringify(body), aid]);

  const generate = async () => {
    if (!isDay(f.camp_start) || !isDay(f.bout_day)) return setGen({ error: 'Pick the camp start and the bout day first.' });
    setGen({ busy: true });
    try {
      const d = await hubGet(query('/api/plan/default', { camp_start: f.camp_start, bout_day: f.bout_day, athlete: aid }));
      setF((o) => ({ ...o, weeks: d.weeks.map((w, i) => ({ ...weekForm(w), why: (d.why || [])[i] || '' })) }));
      setTouched(true);
      setGen({ done: true });
    } catch (e) { setGen({ error: e.message }); }
  };

  const submit = async (e) => {
    e.preventDefault();
    if (!a) return setState({ error: 'Choose the athlete first.' });
    if (errs.length) return setState({ error: errs.join(' ') });
    // The hub's answer counts only for the plan as it is now: one asked
    // before the last keystroke is not about what is saved.
    if (check && check.invalid && check.for === JSON.stringify(body)) return setState({ error: `The hub would refuse this bout: ${check.field ? fieldWords('bout', check.field) + ' ' : ''}${check.invalid}` });
    setState({ saving: true });
    try {
      const rec = await save({ id: boutId && boutId !== 'new' ? boutId : undefined, kind: 'bout', athlete: a.id, body });
      setBoutId(rec.id);
      setLoadedFor(aid + '|' + rec.id);
      setState(savedState('Plan saved on this device; it syncs to the hub by itself'));
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  const classes = tables ? tables.classes : [];
  const groups = groupClasses(classes);
  const fractions = levelFractions(tables);
  const ref = parseNum(f.ref_load);
  const cls = classes.find((c) => c.id === f.weight_class);
  const weekStart = (i) => (isDay(f.camp_start) ? addDays(f.camp_start, 7 * i) : '');

  return html`<form class="coach" data-testid="screen-plan" onSubmit=${submit} novalidate>
    <h1>Camp plan</h1>
    <div class="filters">
      <div class="field"><label for="plan-athlete">Fighter</label>
        <select id="plan-athlete" data-testid="plan-athlete" value=${aid} onChange=${(e) => { setAid(e.target.value); setBoutId(''); setLoadedFor(''); setTouched(false); }}>
          <option value="">Choose…</option>${(list || []).map((x) => html`<option value=${x.id}>${x.name}</option>`)}
        </select></div>
      ${a && html`<div class="field"><label for="plan-bout">Bout</label>
        <select id="plan-bout" data-testid="plan-bout" value=${boutId || 'new'} onChange=${(e) => pickBout(e.target.value)}>
          ${(bouts || []).map((r) => html`<option value=${r.id}>${r.body.name || 'Bout'} — ${r.body.bout_day}</option>`)}
          <option value="new">Set up a new bout…</option>
        </select></div>`}
    </div>
    ${!a && !(aid && !lastSync) && html`<p class="muted">Choose the fighter whose camp you are planning.</p>`}
    ${((aid && !a && !lastSync) || (a && waiting)) && html`<p class="muted" data-testid="plan-waiting">Looking for this fighter's bout: it arrives with this device's first sync on the camp Wi-Fi.</p>`}
    ${a && !waiting && boutId && boutId !== 'new' && html`<${Glance} aid=${aid} boutId=${boutId} name=${a.name} units=${units} />`}
    ${a && !waiting && html`<div class="plan-edit">
    <h2>${boutId && boutId !== 'new' ? 'Edit the plan' : 'The bout'}</h2>
    <div class="plan-grid">
      <div><label for="plan-name">Name (optional)</label><input id="plan-name" data-testid="plan-name" value=${f.name} placeholder="e.g. Town hall card, 6 rounds" onInput=${(e) => set('name', e.target.value)} /></div>
      <div><label for="plan-camp-start">Camp start</label><input id="plan-camp-start" type="date" data-testid="plan-camp-start" value=${f.camp_start} onInput=${(e) => set('camp_start', e.target.value)} /></div>
      <div><label for="plan-bout-day">Bout day</label><input id="plan-bout-day" type="date" data-testid="plan-bout-day" value=${f.bout_day} onInput=${(e) => set('bout_day', e.target.value)} /></div>
      <div><span class="label">Weigh-in</span><div class="row" role="group" aria-label="Weigh-in type">
        <${Choice} value="day_before" current=${f.weigh_in_type} onPick=${(v) => set('weigh_in_type', v)} testid="plan-wi-day_before">Day before</${Choice}>
        <${Choice} value="same_day" current=${f.weigh_in_type} onPick=${(v) => set('weigh_in_type', v)} testid="plan-wi-same_day">Same day</${Choice}>
      </div></div>
      <div><label for="plan-wi-date">Weigh-in date</label><input id="plan-wi-date" type="date" data-testid="plan-wi-date" value=${f.wi_date} onInput=${(e) => set('wi_date', e.target.value)} /></div>
      <div><label for="plan-wi-time">Weigh-in time (venue clock)</label><input id="plan-wi-time" type="time" data-testid="plan-wi-time" value=${f.wi_time} onInput=${(e) => set('wi_time', e.target.value)} /></div>
      <div><label for="plan-bout-time">Bout start (venue clock, optional)</label><input id="plan-bout-time" type="time" data-testid="plan-bout-time" value=${f.bout_time} onInput=${(e) => set('bout_time', e.target.value)} /></div>
      <div><label for="plan-zone">Venue time zone</label><input id="plan-zone" data-testid="plan-zone" list="plan-zones" value=${f.zone} onInput=${(e) => set('zone', e.target.value.trim())} />
        <datalist id="plan-zones">${zones().map((z) => html`<option value=${z} />`)}</datalist></div>
      <div><label for="plan-class">Weight class</label>
        <select id="plan-class" data-testid="plan-class" value=${f.weight_class} onChange=${(e) => set('weight_class', e.target.value)}>
          <option value="">Choose…</option>
          ${groups.map(([g, cs]) => html`<optgroup label=${g}>${cs.map((c) => html`<option value=${c.id}>${classLabel(c)}</option>`)}</optgroup>`)}
          <option value="custom">Custom limit (catchweight)</option>
        </select>
        ${cls && html`<p class="small muted" data-testid="plan-class-limit">${limitWords(cls, units)}${cls.recalled ? ' · limit recalled, check the sanctioning body\'s current table' : ''}</p>`}
      </div>
      ${f.weight_class === 'custom' && html`<div><label for="plan-limit">Custom limit</label><div class="unit-input"><input id="plan-limit" data-testid="plan-limit" inputmode="decimal" value=${f.limit} onInput=${(e) => set('limit', e.target.value)} /><span class="unit">${units}</span></div></div>`}
      <div><label for="plan-start-mass">Start mass (morning, at camp start)</label><div class="unit-input"><input id="plan-start-mass" data-testid="plan-start-mass" inputmode="decimal" value=${f.start_mass} onInput=${(e) => set('start_mass', e.target.value)} /><span class="unit">${units}</span></div></div>
      <div><label for="plan-ref-load">Reference weekly load</label><div class="unit-input"><input id="plan-ref-load" data-testid="plan-ref-load" inputmode="numeric" value=${f.ref_load} placeholder="e.g. 3400" onInput=${(e) => set('ref_load', e.target.value)} /><span class="unit">AU/week</span></div>
        <p class="small muted">A usual heavy week: the sum of session RPE × minutes.</p></div>
    </div>
    <p class="caution" data-testid="plan-mass-caution">${MASS_CAUTION}</p>

    <h2>Weeks</h2>
    <div class="row">
      <button type="button" class="secondary" data-testid="plan-generate" onClick=${generate} disabled=${gen && gen.busy}>${f.weeks.length ? 'Start again from the default plan' : 'Make the default plan'}</button>
    </div>
    ${gen && gen.error && html`<p class="error" data-testid="plan-generate-error">${gen.error}</p>`}
    ${!f.weeks.length && html`<p class="muted small">The default plan steps the load up for three weeks, eases off in the fourth, and tapers in the final week. You can change every week after.</p>`}
    ${f.weeks.length > 0 && html`<div class="weeks" data-testid="plan-weeks" aria-label="Planned weeks">
      ${f.weeks.map((w, i) => html`<${WeekRow} w=${w} i=${i} start=${weekStart(i)} tables=${tables} fraction=${fractions[w.level]} refAU=${ref}
        onEdit=${(nw) => set('weeks', f.weeks.map((x, j) => (j === i ? nw : x)))} current=${weekStart(i) && weekStart(i) <= today() && today() < addDays(weekStart(i), 7)} />`)}
    </div>`}
    ${check && check.taper_cut_pct != null && html`<p class="taper" data-testid="plan-taper-cut" data-pct=${check.taper_cut_pct}>Taper week: load cut by <strong>${fmtN(check.taper_cut_pct, 0)} %</strong> of the reference week (a 41–60 % cut is the range found to work best; Bosquet et al. 2007).</p>`}

    <h2>Planned mass path</h2>
    <${PathChart} check=${check} units=${units} />
    <${PathView} check=${check} units=${units} f=${f} set=${set} />

    <h2>Checks</h2>
    <${Checks} check=${check} errs=${errs} />

    <h2>Weigh-in and stand-down rules</h2>
    <${BoutRules} f=${f} set=${set} presets=${presets} />

    <button class="primary" type="submit" data-testid="plan-save" disabled=${state && state.saving}>${boutId && boutId !== 'new' ? 'Save the changes' : 'Save the plan'}</button>
    <${SaveLine} state=${state} />
    <p class="links"><${Link} to=${query('/athlete', { id: aid })} class="secondary linkbtn" data-testid="plan-to-charts">Charts of ${a.name}</${Link}></p>
    </div>`}
  </form>`;
}

function PathView({ check, units, f, set }) {
  const path = check && Array.isArray(check.path) ? check.path.map((k) => ({ day: dayOfNumber(k.Day), mass_kg: k.MassKg })) : [];
  const editing = f.knots.length > 0;
  const startEdit = () => set('knots', path.map((k) => ({ day: k.day, mass: fmtN(massNum(k.mass_kg, units), 1) })));
  return html`<div data-testid="plan-path">
    ${!editing && html`<p class="small muted">${path.length ? 'The default path: a straight line from the start mass to the final-phase mass, then to the limit at the weigh-in.' : 'The path appears once the bout, limit and start mass are filled in.'}</p>`}
    ${!editing && path.length > 0 && html`<ul class="issues">${path.map((k) => html`<li data-testid="plan-path-point"><span class="num">${longDay(k.day)}</span>: ${mass(k.mass_kg, units)}</li>`)}</ul>
      <button type="button" class="secondary" data-testid="plan-path-edit" onClick=${startEdit}>Edit the path points</button>`}
    ${editing && html`<div class="knots">
      ${f.knots.map((k, i) => html`<div class="knot" data-testid=${`plan-knot-${i + 1}`}>
        <div><label for=${`knot-d-${i}`}>Day</label><input id=${`knot-d-${i}`} type="date" data-testid=${`plan-knot-${i + 1}-day`} value=${k.day} onInput=${(e) => set('knots', f.knots.map((x, j) => (j === i ? { ...x, day: e.target.value } : x)))} /></div>
        <div><label for=${`knot-m-${i}`}>Mass (${units})</label><input id=${`knot-m-${i}`} inputmode="decimal" data-testid=${`plan-knot-${i + 1}-mass`} value=${k.mass} onInput=${(e) => set('knots', f.knots.map((x, j) => (j === i ? { ...x, mass: e.target.value } : x)))} /></div>
        <button type="button" class="secondary" aria-label=${`Remove path point ${i + 1}`} data-testid=${`plan-knot-${i + 1}-remove`} onClick=${() => set('knots', f.knots.filter((_, j) => j !== i))}>✕</button>
      </div>`)}
      <div class="row">
        <button type="button" class="secondary" data-testid="plan-knot-add" onClick=${() => set('knots', [...f.knots, { day: f.knots.length ? f.knots[f.knots.length - 1].day : f.camp_start, mass: '' }])}>Add a point</button>
        <button type="button" class="secondary" data-testid="plan-path-default" onClick=${() => set('knots', [])}>Back to the default path</button>
      </div>
    </div>`}
  </div>`;
}

function Checks({ check, errs }) {
  if (errs.length) return html`<ul class="issues" data-testid="plan-missing">${errs.map((e) => html`<li>${e}</li>`)}</ul>`;
  if (!check) return html`<p class="muted small">Checking with the hub…</p>`;
  if (check.error) return html`<p class="error" data-testid="plan-check-error">The plan cannot be checked: ${check.error}. It can still be saved; the hub checks it when it arrives.</p>`;
  if (check.invalid) return html`<p class="error" data-testid="plan-invalid">The hub would refuse this bout — ${check.field ? html`<strong>${placeWords(check.field)}</strong> ` : ''}${check.invalid}</p>`;
  if (!check.issues.length) return html`<p class="okline" data-testid="plan-ok">Nothing to point out in this plan.</p>`;
  return html`<ul class="issues" data-testid="plan-issues">${check.issues.map((i) => html`<li class=${i.level} data-testid="plan-issue" data-level=${i.level} data-field=${i.field}>
    <span class="field">${i.level === 'watch' ? 'Look at this' : 'Worth knowing'} · ${placeWords(i.field)}</span>
    ${i.message}${i.caution ? html`<span class="small muted" style="display:block;margin-top:4px">${i.caution}</span>` : ''}</li>`)}</ul>`;
}

// placeWords names the part of the plan a check or a refusal is about, in
// words: "Week 3, travel", "Planned mass path".
const PART_WORDS = { level: 'load level', strength: 'strength', conditioning: 'conditioning', spar_rounds: 'sparring', spar_cap_rounds: 'sparring', hard_rounds: 'hard rounds', travel: 'travel', note: 'note', week: 'number' };
export function placeWords(field) {
  const m = /^body\.weeks\[(\d+)\]\.?([a-z_]*)(.*)$/.exec(field || '');
  if (m) {
    const part = PART_WORDS[m[2]] || '';
    const sub = m[3] && /travel\.(\w+)/.test(field) ? { from_zone: ' (leaving from)', to_zone: ' (going to)', depart_at: ' (leaves)', arrive_at: ' (lands)' }[field.split('.').pop()] || '' : '';
    return `Week ${Number(m[1]) + 1}${part ? ', ' + part : ''}${sub}`;
  }
  if ((field || '').startsWith('body.path')) return 'Planned mass path';
  return fieldWords('bout', field) || 'The bout';
}

function classLabel(c) {
  const lim = c.limit ? `${c.limit} ${c.unit}` : `over ${c.over} ${c.unit}`;
  return c.label.includes(lim) || c.label.includes(`${c.limit}${c.unit}`) ? c.label : `${c.label} — ${lim}`;
}

// limitWords states a class limit in its own unit and in the athlete's.
function limitWords(c, units) {
  if (!c.limit) return 'No upper limit: the mass rules do not apply.';
  const own = `${c.limit} ${c.unit}`;
  if (c.unit === units) return c.unit === 'lb' ? `Limit ${own} (${fmtN(c.limit_kg, 2)} kg)` : `Limit ${own}`;
  return `Limit ${own} = ${mass(c.limit_kg, units, 2)}`;
}

const PROGRAMS = { pro: 'Professional (lb)', olympic_2024: 'Olympic 2024 (kg)', world_boxing_2025: 'World Boxing 2025 (kg)' };
function groupClasses(classes) {
  const out = new Map();
  for (const c of classes) {
    const g = `${PROGRAMS[c.program] || c.program}${c.sex === 'f' ? ', women' : c.sex === 'm' ? ', men' : ''}`;
    if (!out.has(g)) out.set(g, []);
    out.get(g).push(c);
  }
  return [...out.entries()];
}

function levelFractions(tables) {
  const out = {};
  const r = tables && tables.rules && tables.rules.find((x) => x.id === 'off_plan');
  if (r) for (const p of r.params) if (p.name.startsWith('level_')) out[p.name.slice(6)] = p.default;
  return out;
}

// WeekRow edits one week: level, strength and conditioning emphases,
// planned sparring and hard rounds, travel and a note.
function WeekRow({ w, i, start, tables, fraction, refAU, onEdit, current }) {
  const k = i + 1;
  const ed = (patch) => onEdit({ ...w, ...patch });
  const emph = (group) => {
    const e = w[group] || {};
    const main = (e.ids || [])[0] || '';
    const rest = (e.ids || []).slice(1);
    return html`<div class="emph"><label for=${`w${k}-${group}`}>${group === 'strength' ? 'Strength' : 'Conditioning'}</label>
      <select id=${`w${k}-${group}`} data-testid=${`plan-week-${k}-${group}`} value=${main}
        onChange=${(ev) => ed({ [group]: { ...e, ids: ev.target.value ? [ev.target.value, ...rest.filter((x) => x !== ev.target.value && ev.target.value !== 'none')] : rest } })}>
        <option value="">—</option>${EMPH_GROUP[group].map((id) => html`<option value=${id}>${emphWords(tables, id)}</option>`)}</select>
      ${group === 'strength' && main !== 'plyometric' && main !== 'none' && html`<button type="button" class="secondary toggle" data-testid=${`plan-week-${k}-plyo`} aria-pressed=${rest.includes('plyometric') ? 'true' : 'false'}
        onClick=${() => ed({ strength: { ...e, ids: [main, ...(rest.includes('plyometric') ? [] : ['plyometric'])].filter(Boolean) } })}>${rest.includes('plyometric') ? '✓ ' : '+ '}${emphWords(tables, 'plyometric').toLowerCase()}</button>`}
      <input aria-label=${`Week ${k} ${group}, in your words`} data-testid=${`plan-week-${k}-${group}-label`} placeholder="in your words (optional)" value=${e.label || ''}
        onInput=${(ev) => ed({ [group]: { ...e, label: ev.target.value } })} /></div>`;
  };
  const t = w.travel;
  const et = (patch) => ed({ travel: { ...t, ...patch } });
  return html`<div class=${`wcard${current ? ' current' : ''}`} data-testid=${`plan-week-${k}`} data-level=${w.level} aria-current=${current ? 'date' : undefined}>
    <div class="whead2"><strong>Week ${k}</strong> <span class="small muted">${start ? dayMonth(start) : ''}${current ? ' · this week' : ''}</span></div>
    ${w.why && html`<p class="small muted why" data-testid=${`plan-week-${k}-why`}>Starting plan: ${w.why}.</p>`}
    <div class="wgrid">
      <div><label for=${`w${k}-level`}>Load level</label><select id=${`w${k}-level`} data-testid=${`plan-week-${k}-level`} aria-label=${`Week ${k} load level`} value=${w.level}
        onChange=${(e) => ed({ level: e.target.value })}>${Object.entries(LEVEL_WORDS).map(([id, t2]) => html`<option value=${id}>${t2}</option>`)}</select>
        ${fraction !== undefined && html`<span class="au">${fmtN(fraction * 100, 0)} % of reference${Number.isFinite(refAU) && refAU > 0 ? ` ≈ ${fmtN(fraction * refAU, 0)} AU` : ''}</span>`}</div>
      ${emph('strength')}
      ${emph('conditioning')}
      <div><label for=${`w${k}-spar`}>Sparring, rounds</label><input id=${`w${k}-spar`} data-testid=${`plan-week-${k}-spar`} inputmode="numeric" value=${w.spar_rounds ?? w.spar_cap_rounds ?? ''}
        onInput=${(e) => ed({ spar_rounds: e.target.value === '' ? '' : Number(e.target.value), spar_cap_rounds: undefined })} /></div>
      <div><label for=${`w${k}-hard`}>Hard rounds, at most</label><input id=${`w${k}-hard`} data-testid=${`plan-week-${k}-hard`} inputmode="numeric" value=${w.hard_rounds ?? ''}
        onInput=${(e) => ed({ hard_rounds: e.target.value === '' ? '' : Number(e.target.value) })} /></div>
      <div class="wide"><label for=${`w${k}-note`}>Note</label><input id=${`w${k}-note`} data-testid=${`plan-week-${k}-note`} value=${w.note || ''} onInput=${(e) => ed({ note: e.target.value })} /></div>
    </div>
    ${!t && html`<button type="button" class="secondary small" data-testid=${`plan-week-${k}-travel-add`} onClick=${() => ed({ travel: { dep_date: start, dep_time: '09:00', arr_date: start, arr_time: '18:00', from_zone: deviceZone(), to_zone: '' } })}>Add travel this week</button>`}
    ${t && html`<fieldset class="travel" data-testid=${`plan-week-${k}-travel`}><legend>Travel</legend><div class="wgrid">
      <div><label for=${`w${k}-tfz`}>From (time zone)</label><input id=${`w${k}-tfz`} list="plan-zones" data-testid=${`plan-week-${k}-from-zone`} value=${t.from_zone} onInput=${(e) => et({ from_zone: e.target.value.trim() })} /></div>
      <div><label for=${`w${k}-tdd`}>Leaves (date)</label><input id=${`w${k}-tdd`} type="date" data-testid=${`plan-week-${k}-dep-date`} value=${t.dep_date} onInput=${(e) => et({ dep_date: e.target.value })} /></div>
      <div><label for=${`w${k}-tdt`}>Leaves (time there)</label><input id=${`w${k}-tdt`} type="time" data-testid=${`plan-week-${k}-dep-time`} value=${t.dep_time} onInput=${(e) => et({ dep_time: e.target.value })} /></div>
      <div><label for=${`w${k}-ttz`}>To (time zone)</label><input id=${`w${k}-ttz`} list="plan-zones" data-testid=${`plan-week-${k}-to-zone`} value=${t.to_zone} onInput=${(e) => et({ to_zone: e.target.value.trim() })} /></div>
      <div><label for=${`w${k}-tad`}>Lands (date)</label><input id=${`w${k}-tad`} type="date" data-testid=${`plan-week-${k}-arr-date`} value=${t.arr_date} onInput=${(e) => et({ arr_date: e.target.value })} /></div>
      <div><label for=${`w${k}-tat`}>Lands (time there)</label><input id=${`w${k}-tat`} type="time" data-testid=${`plan-week-${k}-arr-time`} value=${t.arr_time} onInput=${(e) => et({ arr_time: e.target.value })} /></div>
    </div><button type="button" class="secondary small" data-testid=${`plan-week-${k}-travel-remove`} onClick=${() => ed({ travel: undefined })}>No travel this week</button></fieldset>`}
  </div>`;
}

// PathChart draws the planned mass path as it is edited: mass against
// day, the limit as a line.
function PathChart({ check, units }) {
  // The last path the hub drew stays while a change is being typed, so
  // the chart never jumps out from under the coach's finger.
  const last = useRef([]);
  if (check && Array.isArray(check.path) && check.path.length >= 2) last.current = check.path;
  const path = last.current;
  if (path.length < 2) return html`<figure class="pathchart" data-testid="plan-path-chart" data-points="0"><figcaption class="small muted">The chart of the path appears once the bout, limit and start mass are filled in.</figcaption></figure>`;
  const W = 320, H = 120, P = 28;
  const xs = path.map((k) => k.Day), ys = path.map((k) => massNum(k.MassKg, units));
  const x0 = Math.min(...xs), x1 = Math.max(...xs);
  const y0 = Math.min(...ys) - 0.5, y1 = Math.max(...ys) + 0.5;
  const X = (d) => P + ((d - x0) / Math.max(1, x1 - x0)) * (W - P - 8);
  const Y = (m) => 8 + (1 - (m - y0) / (y1 - y0)) * (H - 8 - 18);
  const pts = path.map((k, i) => `${X(xs[i]).toFixed(1)},${Y(ys[i]).toFixed(1)}`).join(' ');
  return html`<figure class="pathchart" data-testid="plan-path-chart" data-points=${path.length}>
    <svg viewBox=${`0 0 ${W} ${H}`} role="img" aria-label=${`Planned mass path from ${fmtN(ys[0], 1)} to ${fmtN(ys[ys.length - 1], 1)} ${units}`}>
      <polyline points=${pts} fill="none" stroke="currentColor" stroke-width="2" />
      ${path.map((k, i) => html`<circle cx=${X(xs[i])} cy=${Y(ys[i])} r="3" />`)}
      <text x="2" y=${Y(ys[0]) + 4} font-size="10">${fmtN(ys[0], 1)}</text>
      <text x="2" y=${Y(ys[ys.length - 1]) + 4} font-size="10">${fmtN(ys[ys.length - 1], 1)}</text>
      <text x=${P} y=${H - 4} font-size="10">${shortDay(dayOfNumber(x0))}</text>
      <text x=${W - 8} y=${H - 4} font-size="10" text-anchor="end">${shortDay(dayOfNumber(x1))}</text>
    </svg><figcaption class="small muted">Planned morning mass, ${units}, from camp start to the weigh-in.</figcaption></figure>`;
}

// Glance is the saved camp on one page: each week's load, emphases,
// sparring and travel against what was logged, the current week marked,
// a week running hot or cold in words, the mass path and the checks. It
// is read again whenever the device's store changes (a session syncs),
// and it is what the printed page holds.
function Glance({ aid, boutId, name, units }) {
  const v = useVersion();
  const rep = useAsync(() => hubGet(query(`/api/athletes/${encodeURIComponent(aid)}/plan`, { bout: boutId })).catch((e) => ({ error: e.message })), [aid, boutId, v], null);
  if (!rep) return html`<section class="glance" data-testid="plan-glance" aria-busy="true"><h2>The camp at a glance</h2><p class="muted small">Reading the plan and what was done from the hub…</p></section>`;
  if (rep.error) return html`<section class="glance" data-testid="plan-glance"><h2>The camp at a glance</h2><p class="muted small" data-testid="plan-done-error">Planned against done needs the hub: ${rep.error}</p></section>`;
  const b = rep.bout;
  const maxAU = Math.max(1, ...rep.weeks.map((w) => Math.max(w.planned_load_au || 0, w.done.load_au || 0)));
  return html`<section class="glance" data-testid="plan-glance">
    <div class="glance-head"><h2>The camp at a glance</h2>
      <button type="button" class="secondary" data-testid="plan-print" onClick=${() => window.print()}>Print on one page</button></div>
    <p class="print-only"><strong>${name}</strong> — ${b.name || 'bout'} on ${longDay(b.bout_day)}; camp from ${longDay(b.camp_start)}. Done up to ${longDay(rep.today)}.</p>
    <div class="done-table" data-testid="plan-done" role="table" aria-label="Planned against done, week by week">
      <div class="drow dhead" role="row"><span role="columnheader">Week</span><span role="columnheader">Load: done / planned</span><span role="columnheader">Strength · conditioning</span><span role="columnheader">Sparring: done / planned (hard)</span></div>
      ${rep.weeks.map((w) => html`<div class=${`drow${w.current ? ' current' : ''}${w.verdict ? ' ' + w.verdict : ''}`} role="row" data-testid=${`plan-done-${w.week}`}
        data-load=${w.done.load_au} data-sessions=${w.done.sessions} data-rounds=${w.done.rounds} data-hard=${w.done.hard_rounds} data-verdict=${w.verdict || ''} aria-current=${w.current ? 'date' : undefined}>
        <span role="cell"><strong>Week ${w.week}</strong> <span class="small muted">${dayMonth(w.start)}</span><br /><span class=${`lvl lvl-${w.level}`}>${LEVEL_WORDS[w.level] || w.level}</span>${w.current ? html` <span class="now">this week</span>` : ''}</span>
        <span role="cell" class="num">
          <span class="bars" aria-hidden="true"><span class="bar plan" style=${`width:${((w.planned_load_au || 0) / maxAU) * 100}%`}></span><span class="bar done" style=${`width:${(w.done.load_au / maxAU) * 100}%`}></span></span>
          ${w.done.days ? fmtN(w.done.load_au, 0) : '—'} / ${w.planned_load_au != null ? fmtN(w.planned_load_au, 0) : '—'} AU
          ${w.done.sessions ? html`<span class="small muted" style="display:block">${w.done.sessions} session${w.done.sessions === 1 ? '' : 's'}<span class="by-emph">: ${Object.entries(w.done.by_emphasis).sort((x, y) => y[1] - x[1]).map(([id, n]) => `${n} ${id ? emphWords(null, id).toLowerCase() : 'no focus'}`).join(', ')}</span></span>` : ''}</span>
        <span role="cell">${[emphText(null, w.strength), emphText(null, w.conditioning)].filter(Boolean).join(' · ') || '—'}
          ${w.travel && html`<span class="travel-line" data-testid=${`plan-done-${w.week}-travel`}>Travel: ${w.travel.from_zone} → ${w.travel.to_zone}, lands ${wallClock(w.travel.arrive_at, w.travel.to_zone).date} ${wallClock(w.travel.arrive_at, w.travel.to_zone).time} (${shiftWords(w.travel)})</span>`}
          ${w.note && html`<span class="small muted" style="display:block">${w.note}</span>`}</span>
        <span role="cell" class="num">${w.done.days ? `${w.done.rounds} (${w.done.hard_rounds})` : '—'} / ${w.spar_rounds ?? '—'}${w.hard_rounds != null ? ` (${w.hard_rounds})` : ''}</span>
        ${w.words && html`<span role="cell" class="words" data-testid=${`plan-done-${w.week}-words`}>${w.words}</span>`}
      </div>`)}
    </div>
    <div class="print-only"><${PathChart} check=${{ path: rep.path }} units=${units} /></div>
    ${rep.checks.length > 0 && html`<ul class="issues glance-checks" data-testid="plan-glance-checks">${rep.checks.map((i) => html`<li class=${i.level} data-check=${i.check}>
      <span class="field">${i.level === 'watch' ? 'Look at this' : 'Worth knowing'} · ${placeWords(i.field)}</span>${i.message}</li>`)}</ul>`}
    <p class="small muted print-only">${MASS_CAUTION}</p>
  </section>`;
}

// shiftWords is a journey's clock shift from the browser's zone data at
// the landing instant: "+9 h" or "−5 h".
function shiftWords(t) {
  try {
    const arr = Date.parse(t.arrive_at);
    const at = new Date(arr).toISOString();
    const off = (z) => zoneOffset(z, wallClock(at, z).date, wallClock(at, z).time);
    let h = (off(t.to_zone) - off(t.from_zone)) / 60;
    if (h > 12) h -= 24;
    if (h < -12) h += 24;
    return h === 0 ? 'no clock change' : `clock ${h > 0 ? '+' : '−'}${Math.abs(h)} h`;
  } catch (_) { return 'clock change unknown'; }
}
