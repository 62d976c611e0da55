// Stand-downs in force: restrictions, not prompts. The day board, the wall
// sheet and ringside show each running stand-down above every flag, every
// day it runs: the fighter, what happened and when it started, the rule
// that sets its length, the earliest day it can end, and that only a
// doctor's written clearance ends it. The hub decides what is running;
// this module only words it.
import { html, useState, useEffect, useVersion } from './ui.js';
import { hubGet } from './sync.js';
import { localDay } from './record.js';

export const UNTIL = 'cleared in writing by a doctor';

const INCIDENT_WORDS = {
  head_knock: 'Head knock', knockdown: 'Knockdown', stoppage: 'Stoppage', knockout: 'Knockout',
  knockout_loc: 'Knockout with loss of consciousness',
};
export const incidentWords = (t) => INCIDENT_WORDS[t] || 'Incident';

const WD = ['Sun', 'Mon', 'Tue', 'Wed', 'Thu', 'Fri', 'Sat'];
const MO = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];
const dayNum = (d) => Date.UTC(+d.slice(0, 4), +d.slice(5, 7) - 1, +d.slice(8, 10)) / 86400000;
const isDay = (s) => typeof s === 'string' && /^\d{4}-\d{2}-\d{2}$/.test(s);
// dayWords: "Thu 26 Nov 2026".
export function dayWords(d) {
  if (!isDay(d)) return '';
  const t = new Date(dayNum(d) * 86400000);
  return `${WD[t.getUTCDay()]} ${t.getUTCDate()} ${MO[t.getUTCMonth()]} ${t.getUTCFullYear()}`;
}
// clockOf: the wall-clock time an RFC 3339 stamp names, as written (the
// recording device's own clock), so a knock at 16:40 reads 16:40.
function clockOf(at) {
  const m = /T(\d{2}):(\d{2})/.exec(at || '');
  return m ? `${m[1]}:${m[2]}` : '';
}

// fromFlag reads a running stand-down from a spar_on_hold flag. The hub
// sends it as flag.restriction; a hub without that field still sends the
// info flag, whose reason names the incident and its dates.
function fromFlag(f) {
  const r = f.restriction;
  if (r && typeof r === 'object') {
    return {
      athlete: f.athlete, incident: r.incident || (f.inputs || [])[0] || '', type: r.incident_type || '',
      started_day: r.started_day || '', started_at: r.started_at || '', rule: r.rule || '',
      earliest_end: r.earliest_end || '', until: r.until || UNTIL, rts: r.rts && typeof r.rts === 'object' ? r.rts : null,
    };
  }
  const why = f.reason || '';
  const m = /after the (.+?) on (\d{4}-\d{2}-\d{2})/.exec(why);
  const end = /before (\d{4}-\d{2}-\d{2})/.exec(why);
  const type = m ? Object.keys(INCIDENT_WORDS).find((k) => INCIDENT_WORDS[k].toLowerCase() === m[1]) || '' : '';
  return {
    athlete: f.athlete, incident: (f.inputs || [])[0] || '', type, started_day: m ? m[2] : '', started_at: '',
    rule: f.threshold ? `${incidentWords(type)}: at least ${f.threshold} days` : `${incidentWords(type)}: treated as a suspected concussion`,
    earliest_end: end ? end[1] : '', until: UNTIL, rts: null,
  };
}

// isRestriction: the flag is the stand-down itself (shown in the strip),
// not the alert for sparring during it (a prompt that wants a decision).
export const isRestriction = (f) => f.rule === 'spar_on_hold' && f.status !== 'forming' && f.level === 'info';

// restrictionsOf lists the running stand-downs in a day's flags, one per
// incident, oldest first within a fighter.
export function restrictionsOf(flags) {
  const seen = new Set();
  const out = [];
  for (const f of flags || []) {
    if (f.rule !== 'spar_on_hold' || f.status === 'forming') continue;
    if (!isRestriction(f) && !f.restriction) continue;
    const r = fromFlag(f);
    const k = `${r.athlete}|${r.incident}`;
    if (seen.has(k)) continue;
    seen.add(k);
    out.push(r);
  }
  return out.sort((a, b) => (a.athlete < b.athlete ? -1 : a.athlete > b.athlete ? 1 : (a.started_day || '').localeCompare(b.started_day || '')));
}

// stampWords: "Sun 29 Nov 2026 at 10:00", the day and wall-clock time an
// RFC 3339 stamp names, as written.
function stampWords(at) {
  const d = (at || '').slice(0, 10);
  if (!isDay(d)) return '';
  return `${dayWords(d)}${clockOf(at) ? ` at ${clockOf(at)}` : ''}`;
}

// rtsWords: the return to sport that goes with a stand-down, from the
// numbers the hub computed (medical.Build): the last step and when, the
// next step and the earliest time it may be taken, and the early steps'
// heart-rate caps from the fighter's age (Patricios et al. 2023). Caps are
// read rounded down, so the number read is never above the cap.
export function rtsWords(l) {
  if (!l || typeof l !== 'object') return null;
  const done = l.current > 0
    ? `step ${l.current} of 6 (${l.current_name || 'step ' + l.current}) done ${stampWords(l.current_at)}`
    : 'not started';
  let next = 'all six steps done';
  if (l.next > 0) {
    next = `next: step ${l.next} (${l.next_name || 'step ' + l.next})`;
    if (l.next_from) next += `, not before ${stampWords(l.next_from)}`;
    if (l.next_needs_clearance) next += ', only with a written clearance by a doctor';
  }
  const caps = Array.isArray(l.early_caps_bpm) && l.early_caps_bpm.length === 2
    ? `Early steps: heart rate up to ${Math.floor(l.early_caps_bpm[0])} bpm (light), ${Math.floor(l.early_caps_bpm[1])} bpm (moderate), from 220 − age ${l.age}`
    : "Early steps' heart-rate caps need the fighter's birth year (camp set-up)";
  return { done: `Return to sport: ${done}`, next, caps: l.next > 0 ? caps : '' };
}

// restrictionLines: the words of one stand-down, for screen and paper.
export function restrictionLines(r, day) {
  const start = `${incidentWords(r.type)} on ${dayWords(r.started_day)}${clockOf(r.started_at) ? ` at ${clockOf(r.started_at)}` : ''}`;
  let since = '';
  if (isDay(day) && isDay(r.started_day)) {
    const n = dayNum(day) - dayNum(r.started_day);
    since = n <= 0 ? 'started today' : n === 1 ? 'started yesterday' : `started ${n} days ago`;
  }
  const end = r.earliest_end ? `not before ${dayWords(r.earliest_end)}` : 'no earliest day: only the clearance ends it';
  const until = (r.until || UNTIL).replace(/^until\s+/i, '');
  return { start, since, rule: r.rule, end, until: `Until ${until}`, rts: rtsWords(r.rts) };
}

// RestrictionStrip: the running stand-downs above everything else on a
// screen. names maps athlete id → name. Nothing is drawn when none runs.
export function RestrictionStrip({ list, names, day, testid, compact }) {
  if (!list || !list.length) return null;
  return html`<section class=${`restrictions${compact ? ' compact' : ''}`} data-testid=${testid} aria-label="Stand-downs in force">
    ${list.map((r) => {
      const w = restrictionLines(r, day);
      // The return to sport: its own line on screen; on the wall sheet
      // (compact) it runs on in the same paragraph, to keep to one page.
      const rts = w.rts && html`<${compact ? 'span' : 'p'} class="rx-rts" data-testid="restriction-rts">${compact ? ' ' : ''}<span data-testid="restriction-rts-done">${w.rts.done}</span>${' · '}<span data-testid="restriction-rts-next">${w.rts.next}</span>${w.rts.caps && html`${' · '}<span data-testid="restriction-rts-caps">${w.rts.caps}</span>`}.</${compact ? 'span' : 'p'}>`;
      return html`<div class="restriction" data-testid="restriction" data-athlete=${r.athlete} data-incident=${r.incident}>
        <p class="rx-head"><span class="rx-mark" aria-hidden="true"></span><strong>${names[r.athlete] || 'A fighter'}: stand-down — no sparring or contact</strong></p>
        <p class="rx-body"><span data-testid="restriction-start">${w.start}${w.since ? ` (${w.since})` : ''}</span>${' · '}<span data-testid="restriction-rule">Rule: ${w.rule}</span>${' · '}<span data-testid="restriction-end">Earliest end: ${w.end}</span>${' · '}<strong data-testid="restriction-until">${w.until}.</strong>${compact && rts}</p>
        ${!compact && rts}
      </div>`;
    })}
  </section>`;
}

// useOwnStandDowns: on an athlete's phone, the fighter's own stand-downs in
// force today as the hub computed them (GET /api/flags answers an
// athlete's device with its own athlete's flags only), fetched again when
// entries arrive. The last answer is kept on the phone, so the strip still
// shows offline, saying which day the hub last reported. ready turns true
// once an answer or the kept copy is in hand, or the hub has not answered
// within WAIT_MS, so the screen first renders with its strip in place.
// role is this device's role (null while unknown); other roles need none.
const OWN_KEY = 'cb.own-standdowns';
const WAIT_MS = 2500;
export function useOwnStandDowns(role) {
  const v = useVersion();
  const [st, setSt] = useState({ ready: false, list: [], names: {}, day: '', failed: false });
  useEffect(() => {
    if (role === null || role === undefined) return undefined; // not known yet
    if (role !== 'athlete') {
      setSt((o) => (o.ready ? o : { ...o, ready: true }));
      return undefined;
    }
    let alive = true;
    setSt((o) => {
      if (o.ready) return o;
      try {
        const c = JSON.parse(localStorage.getItem(OWN_KEY) || 'null');
        if (c && Array.isArray(c.list)) return { ready: true, list: c.list, names: c.names || {}, day: c.day || '', failed: false };
      } catch (_) { /* no kept copy */ }
      return o;
    });
    const timer = setTimeout(() => { if (alive) setSt((o) => (o.ready ? o : { ...o, ready: true })); }, WAIT_MS);
    (async () => {
      try {
        // Today as the hub counts it (the camp's time zone, not the phone's).
        const data = await hubGet('/api/flags');
        const names = {};
        for (const a of data.athletes || []) names[a.id] = a.name;
        const got = { list: restrictionsOf(data.flags), names, day: data.day || localDay() };
        try { localStorage.setItem(OWN_KEY, JSON.stringify(got)); } catch (_) { /* not kept */ }
        if (alive) setSt({ ready: true, failed: false, ...got });
      } catch (_) {
        if (alive) setSt((o) => ({ ...o, ready: true, failed: true }));
      }
    })();
    return () => { alive = false; clearTimeout(timer); };
  }, [role, v]);
  return st;
}

// OwnStandDowns: the athlete's own strip (nothing when none runs).
export function OwnStandDowns({ st }) {
  if (!st.list.length) return null;
  return html`<div data-testid="home-standdowns">
    <${RestrictionStrip} list=${st.list} names=${st.names} day=${st.day} testid="home-restrictions" />
    ${st.failed && html`<p class="muted small" data-testid="home-standdowns-copy">As the hub last reported it (${dayWords(st.day)}); the hub cannot be reached now.</p>`}
  </div>`;
}
