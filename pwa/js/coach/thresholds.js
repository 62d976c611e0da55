// Flag thresholds: one fighter's own thresholds for the hub's flag rules,
// saved in the fighter's settings record, or (?camp=1) the whole camp's,
// saved in the camp's settings record. A fighter's empty box uses the
// camp-wide value where the camp's settings set one, else the product's
// default (each from the sources in the product's references). The hub
// merges defaults, camp and fighter in that order and recomputes the
// flags when the record reaches it. The camp's check-in hour is kept as
// the record's checkin_hour, where camp set-up has always kept it.
import { html, useState, useEffect, useRef, useAsync, useAthletes, useVersion, Link, SaveLine, savedState, savedHere, plural } from '../ui.js';
import { save, byKind, getMeta } from '../db.js';
import { cmpHLC } from '../hlc.js';
import { getTables } from './api.js';
import { ruleName } from './common.js';

// latestSettings: the live settings record of one athlete ('' for the
// camp's) that the hub reads — the one with the latest stamp.
function latestSettings(all, athlete) {
  let best = null;
  for (const r of all) {
    if (r.deleted || (r.athlete || '') !== athlete) continue;
    if (!best || cmpHLC(r.stamp, best.stamp) > 0) best = r;
  }
  return best;
}

const key = (rule, p) => `${rule}.${p}`;
const HOUR = 'missing_checkin.hour'; // the camp's check-in hour
const sentence = (s) => (s ? s[0].toUpperCase() + s.slice(1) : s);
const shown = (v) => (Number.isFinite(v) ? String(Math.round(v * 1000) / 1000) : '');
const withUnit = (v, unit) => (unit ? `${shown(v)} ${unit}` : shown(v));

// parse reads a typed number ("4,5" as 4.5); '' is "not set".
function parse(text) {
  const t = String(text).trim().replace(',', '.');
  if (t === '') return null;
  const v = Number(t);
  return Number.isFinite(v) ? v : NaN;
}

export function Thresholds() {
  const q = new URLSearchParams(location.search);
  const camp = q.get('camp') === '1';
  const id = camp ? '' : q.get('athlete') || '';
  const list = useAthletes();
  const v = useVersion();
  const tables = useAsync(() => getTables().catch(() => null), [], undefined);
  // Thresholds are the coach's: a staff device shows them and says so.
  const role = useAsync(() => getMeta('role').then((r) => r || ''), [], null);
  const settings = useAsync(async () => {
    const all = await byKind('settings');
    return { own: latestSettings(all, id), camp: latestSettings(all, '') };
  }, [id, v], undefined);
  const [typed, setTyped] = useState({});
  const who = camp ? 'camp' : id;
  const [state, setState] = useState(null);
  const [bad, setBad] = useState('');
  // Rules shown open: those with a number of the fighter's at the start and
  // any a refusal pointed at. Only ever added to, so a re-render never
  // closes a rule the coach is typing in.
  const [opened, setOpened] = useState(() => new Set());
  const prefilled = useRef(null);
  useEffect(() => {
    // Fill the boxes once per fighter: a sync arriving while the coach
    // types must not put the stored numbers back.
    if (!settings || prefilled.current === who) return;
    prefilled.current = who;
    const body = (settings.own && settings.own.body) || {};
    const th = body.thresholds || {};
    const out = {};
    for (const [rule, ps] of Object.entries(th)) for (const [p, x] of Object.entries(ps)) out[key(rule, p)] = shown(x);
    const rules = new Set(Object.keys(th));
    if (camp && Number.isFinite(body.checkin_hour) && !out[HOUR]) {
      out[HOUR] = shown(body.checkin_hour);
      rules.add('missing_checkin');
    }
    setTyped(out);
    setOpened(rules);
  }, [settings, who]);

  const loading = list === null || tables === undefined || settings === undefined || role === null;
  const readOnly = role === 'staff' || role === 'athlete';
  if (loading) return html`<section class="coach" data-testid="screen-thresholds" data-ready="false"><h1>Flag thresholds</h1><p class="muted">Loading…</p></section>`;
  const a = camp ? { name: 'the whole camp' } : (list || []).find((x) => x.id === id);
  if (!a) {
    return html`<section class="coach" data-testid="screen-thresholds" data-ready="true"><h1>Flag thresholds</h1>
      <p>Open a fighter's charts and choose <strong>Flag thresholds</strong> there.</p>
      <p><${Link} to="/athlete" class="secondary linkbtn">Fighter charts</${Link}></p></section>`;
  }
  if (!tables || !tables.rules) {
    return html`<section class="coach" data-testid="screen-thresholds" data-ready="true"><h1>Flag thresholds</h1>
      <p class="error" role="alert" data-testid="thresholds-no-tables">The rules' thresholds come from the hub and this device has not had them yet. Open this screen once on the camp Wi-Fi.</p></section>`;
  }
  const campTh = camp ? {} : (settings.camp && settings.camp.body && settings.camp.body.thresholds) || {};
  const campHour = !camp && settings.camp && settings.camp.body ? settings.camp.body.checkin_hour : undefined;
  // fallback: what applies to a box left empty, and where it comes from.
  const fallback = (rule, p) => {
    const c = campTh[rule] && campTh[rule][p.name];
    if (Number.isFinite(c)) return { v: c, from: 'camp-wide' };
    if (rule === 'missing_checkin' && p.name === 'hour' && Number.isFinite(campHour)) return { v: campHour, from: 'camp-wide' };
    return { v: p.default, from: 'default' };
  };
  const set = (k, text) => { setTyped({ ...typed, [k]: text }); setState(null); setBad(''); };
  const refuse = (rule, k) => { setBad(k); if (!opened.has(rule)) setOpened(new Set([...opened, rule])); };
  const own = Object.values(typed).filter((t) => String(t).trim() !== '').length;

  const submit = async (e) => {
    e.preventDefault();
    const th = {};
    for (const r of tables.rules) {
      for (const p of r.params || []) {
        const k = key(r.id, p.name);
        const x = parse(typed[k] || '');
        if (x === null) continue;
        if (Number.isNaN(x)) {
          refuse(r.id, k);
          return setState({ error: `Not saved: ${ruleName(r.id)}: ${p.help}: type a number${p.unit ? ` in ${p.unit}` : ''}, or leave the box empty for the ${fallback(r.id, p).from} value.` });
        }
        (th[r.id] = th[r.id] || {})[p.name] = x;
      }
    }
    const old = settings.own;
    const body = { ...((old && old.body) || {}) };
    if (camp) {
      // The camp's check-in hour stays where camp set-up keeps it.
      const hour = th.missing_checkin && th.missing_checkin.hour;
      if (hour !== undefined) {
        body.checkin_hour = hour;
        delete th.missing_checkin.hour;
        if (!Object.keys(th.missing_checkin).length) delete th.missing_checkin;
      } else delete body.checkin_hour;
    }
    if (Object.keys(th).length) body.thresholds = th; else delete body.thresholds;
    if (!old && !Object.keys(body).length) {
      return setState({ error: camp ? 'Nothing to save: every box is empty, so the camp has the default thresholds.' : 'Nothing to save: every box is empty, so this fighter has the camp-wide and default thresholds.' });
    }
    setState({ saving: true });
    try {
      await save({ id: old ? old.id : undefined, kind: 'settings', athlete: camp ? undefined : id, day: old ? old.day : undefined, body });
      setState(savedState(`${savedHere()}. The hub recomputes ${camp ? "every fighter's" : `${a.name}'s`} flags with these thresholds when it receives them.`));
    } catch (err) {
      const m = /^body\.thresholds\.([a-z0-9_]+)\.([a-z0-9_]+)$/.exec(err.field || '');
      if (m) refuse(m[1], key(m[1], m[2]));
      setState({ error: `Not saved: ${err.message}` });
    }
  };

  return html`<form class="coach" onSubmit=${submit} data-testid="screen-thresholds" data-ready="true" novalidate>
    <h1>Flag thresholds</h1>
    ${camp
      ? html`<p data-testid="thresholds-who">For <strong>the whole camp</strong>: ${own ? plural(own, 'threshold', 'thresholds') + ' of its own' : 'none of its own yet'}. A box left empty uses the default; a fighter's own number, set from their charts, wins over the camp's.</p>`
      : html`<p data-testid="thresholds-who">For <strong>${a.name}</strong>: ${own ? plural(own, 'threshold', 'thresholds') + ' of their own' : 'none of their own yet'}. A box left empty uses the camp-wide value where the camp has one, else the default (<${Link} to="/thresholds?camp=1" data-testid="thresholds-to-camp">the camp's thresholds</${Link}>).</p>`}
    ${readOnly && html`<p class="card" role="note" data-testid="thresholds-read-only">Only a coach's device changes thresholds; this ${role} device shows them.</p>`}
    <p class="caution" data-testid="thresholds-caution">A flag is a prompt for your judgement, not a verdict. The defaults come from published work and common practice; change one when you know this fighter's own noise or history. Stand-downs after a head knock can be made longer, never shorter, and the medical team and the sanctioning body's rules always come first.</p>
    ${tables.rules.map((r) => {
      const mine = (r.params || []).filter((p) => String(typed[key(r.id, p.name)] || '').trim() !== '').length;
      return html`<details class="card thresholds" data-testid=${`thresholds-rule-${r.id}`} open=${opened.has(r.id)}>
        <summary data-testid=${`thresholds-open-${r.id}`}><strong>${ruleName(r.id)}</strong>${mine ? html` <span class="muted">· ${mine} set for ${a.name}</span>` : ''}</summary>
        ${(r.params || []).map((p) => {
          const k = key(r.id, p.name);
          const fb = fallback(r.id, p);
          const tid = `threshold-${r.id}-${p.name}`;
          return html`<div class="threshold">
            <label for=${tid}>${sentence(p.help)}</label>
            <div class="unit-input"><input id=${tid} data-testid=${tid} inputmode="decimal" autocomplete="off"
              placeholder=${shown(fb.v)} value=${typed[k] || ''} aria-invalid=${bad === k ? 'true' : 'false'} disabled=${readOnly}
              onInput=${(e) => set(k, e.target.value)} /><span class="unit">${p.unit || ''}</span></div>
            <p class="muted small" data-testid=${`${tid}-fallback`}>Empty: ${fb.from} ${withUnit(fb.v, p.unit)}${fb.from === 'camp-wide' ? ` (default ${withUnit(p.default, p.unit)})` : ''}. Allowed ${withUnit(p.min, '')} to ${withUnit(p.max, p.unit)}.</p>
          </div>`;
        })}
      </details>`;
    })}
    ${!readOnly && html`<button type="submit" class="primary" data-testid="thresholds-save" disabled=${state && state.saving}>Save thresholds</button>
    <${SaveLine} state=${state} />`}
    ${camp
      ? html`<p class="row no-print"><${Link} to="/camp" class="secondary linkbtn" data-testid="thresholds-to-setup">Camp set-up</${Link}></p>`
      : html`<p class="row no-print"><${Link} to=${`/athlete?id=${encodeURIComponent(id)}`} class="secondary linkbtn" data-testid="thresholds-to-athlete">${a.name}'s charts</${Link}></p>`}
  </form>`;
}
