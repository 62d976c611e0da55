// The hub's checks of a record body, run on this device before it says
// "saved": every limit comes from the vocabulary the hub generates from its
// registry of record kinds (/js/vocab.js), and every refusal names the field
// as the hub would, in the hub's words. A browser test holds this module to
// the hub's answers for every limit of every kind.
import { VOCAB } from './vocab.js';
import { correctedNow } from './record.js';

// fmtNum writes a number as the hub does (shortest form that reads back).
const fmtNum = (v) => String(v);

function fill(words, f, got, year) {
  const [lo, hi] = range(f, year);
  const num = (x) => (f.decimals > 0 ? x.toFixed(f.decimals) : fmtNum(x));
  return words.replace('{min}', num(lo)).replace('{max}', num(hi)).replace('{unit}', f.unit ? ' ' + f.unit : '').replace('{got}', fmtNum(got));
}

function range(f, year) {
  const lo = f.min;
  let hi = f.max === undefined ? Infinity : f.max;
  if (f.max_years_ago > 0) hi = year - f.max_years_ago;
  return [lo, hi];
}

// values lists [path, value] for a field path ("body.a", "body.a[]",
// "body.a[].b") in a body, with array indexes filled in.
function values(body, path) {
  let cur = [['body', body]];
  for (const part of path.replace(/^body\./, '').split('.')) {
    const arr = part.endsWith('[]');
    const name = arr ? part.slice(0, -2) : part;
    const next = [];
    for (const [p, o] of cur) {
      if (!o || typeof o !== 'object' || o[name] === undefined || o[name] === null) continue;
      if (arr) {
        if (Array.isArray(o[name])) o[name].forEach((v, i) => next.push([`${p}.${name}[${i}]`, v]));
      } else next.push([`${p}.${name}`, o[name]]);
    }
    cur = next;
  }
  return cur;
}

// textTrouble says, in the hub's words (records.CheckText), why a text
// would break a screen: a bidirectional override or isolate, or nothing
// visible at all. Control characters cannot be typed into the fields.
const BIDI = /[\u202A-\u202E\u2066-\u2069]/u;
const BLANK = /[\u115F\u1160\u3164\uFFA0\u2800]/gu;
const VISIBLE = /[\p{L}\p{Mc}\p{N}\p{P}\p{S}]/u;
export function textTrouble(v) {
  const m = v.match(BIDI);
  if (m) return `contains a character that reverses or reorders the text on screen (U+${m[0].codePointAt(0).toString(16).toUpperCase().padStart(4, '0')}); type the text without it`;
  if (v.trim() !== '' && !VISIBLE.test(v.replace(BLANK, ''))) return VOCAB.invisible_words;
  return '';
}

function checkField(f, body, year) {
  for (const [path, v] of values(body, f.path)) {
    const bad = (reason) => ({ field: path, reason, label: f.label });
    if (f.min !== undefined && typeof v === 'number') {
      const [lo, hi] = range(f, year);
      const out = Number.isNaN(v) || (f.min_above ? v <= lo : v < lo) || v > hi;
      if (out) return bad(fill(f.words || VOCAB.range_words, f, v, year));
      if (f.step > 0 && Math.abs(v / f.step - Math.round(v / f.step)) > 1e-9 && f.step_words) return bad(fill(f.step_words, f, v, year));
    }
    if (f.enum && typeof v === 'string' && v !== '' && !f.enum.includes(v)) {
      return bad(`must be one of ${f.enum.join(', ')}; got ${JSON.stringify(v)}`);
    }
    if (f.max_len && typeof v === 'string') {
      if ([...v].length > f.max_len) return bad(`must be at most ${f.max_len} characters; got ${[...v].length}`);
      const why = textTrouble(v);
      if (why) return bad(why);
    }
  }
  return null;
}

// ---- checks of one field against another (the registry's cases) ----

const DAY = 86400000;
const dayNum = (s) => (typeof s === 'string' && /^\d{4}-\d\d-\d\d$/.test(s) ? Date.parse(s + 'T00:00:00Z') : NaN);

// weighInDay is the calendar day of the weigh-in: in its venue's zone when
// one is named, otherwise as written (its own offset), as the hub reads it.
function weighInDay(wi, zone) {
  const t = Date.parse(wi);
  if (!Number.isFinite(t)) return '';
  if (!zone) return wi.slice(0, 10);
  try {
    return new Intl.DateTimeFormat('en-CA', { timeZone: zone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(new Date(t));
  } catch (_) { return wi.slice(0, 10); }
}

const cross = {
  checkin(b) {
    const any = ['mass_kg', 'sleep_h', 'sleep', 'fatigue', 'soreness', 'stress', 'mood', 'rhr_bpm', 'usg'].some((k) => b[k] !== undefined && b[k] !== null) ||
      (typeof b.note === 'string' && b.note.trim() !== '');
    if (!any) return { field: 'body', reason: 'a check-in needs at least one entry: mass_kg, sleep_h, the wellness items, rhr_bpm, usg or a note', label: 'Check-in' };
    return null;
  },
  intervals(b) {
    const sets = b.sets === undefined ? 1 : b.sets;
    if (b.done_reps !== undefined && b.done_reps !== null && (b.done_reps < 0 || b.done_reps > b.reps * sets)) {
      return { field: 'body.done_reps', label: 'Reps completed', reason: `must be between 0 and ${b.reps * sets} repetitions (reps × sets); got ${b.done_reps}` };
    }
    if (b.hr_mean != null && b.hr_peak != null && b.hr_mean > b.hr_peak) {
      return { field: 'body.hr_mean', label: 'Mean heart rate', reason: `is ${b.hr_mean} bpm, above the peak of ${b.hr_peak} bpm` };
    }
    if (b.minutes === undefined || b.minutes_derived) {
      const min = (sets * b.reps * (b.work_s + (b.rest_s || 0)) + (sets - 1) * (b.set_rest_s || 0)) / 60;
      if (min > VOCAB.limits.max_session_min) {
        return { field: 'body.minutes', label: 'Duration', reason: `adds up to ${fmtNum(Math.round(min * 10) / 10)} min (sets × reps × (work + rest) + rests between sets); a session is at most ${VOCAB.limits.max_session_min} min — check reps and sets` };
      }
    }
    return null;
  },
  bout(b) {
    const start = dayNum(b.camp_start);
    const bout = dayNum(b.bout_day);
    if (!Number.isFinite(start) || !Number.isFinite(bout)) return null; // the screen asks for both days
    if (bout < start) return { field: 'body.bout_day', label: 'Bout day', reason: `is ${b.bout_day}, before the camp starts on ${b.camp_start}` };
    const days = Math.round((bout - start) / DAY);
    if (days > VOCAB.limits.max_camp_days) {
      return { field: 'body.bout_day', label: 'Bout day', reason: `is ${days} days after the camp start; a camp is at most ${VOCAB.limits.max_camp_days} days — check the year` };
    }
    const wiDay = b.weigh_in ? weighInDay(b.weigh_in, b.weigh_in_zone) : '';
    if (wiDay) {
      if (wiDay > b.bout_day) return { field: 'body.weigh_in', label: 'Weigh-in', reason: `is on ${wiDay}, after the bout day ${b.bout_day}` };
      if (wiDay < b.camp_start) return { field: 'body.weigh_in', label: 'Weigh-in', reason: `is on ${wiDay}, before the camp starts on ${b.camp_start}` };
      const gap = Math.round((bout - dayNum(wiDay)) / DAY);
      if (b.weigh_in_type === 'same_day' && gap !== 0) {
        return { field: 'body.weigh_in_type', label: 'Weigh-in', reason: `is same_day, but the weigh-in is on ${wiDay} and the bout on ${b.bout_day}; use day_before or move the weigh-in` };
      }
      const most = VOCAB.limits.max_day_before_days;
      if (b.weigh_in_type === 'day_before' && (gap < 1 || gap > most)) {
        return { field: 'body.weigh_in_type', label: 'Weigh-in', reason: `is day_before, so the weigh-in must be 1 to ${most} days before the bout on ${b.bout_day}; it is on ${wiDay}` };
      }
    }
    let prev = '';
    for (const [i, k] of (b.path || []).entries()) {
      const field = `body.path[${i}].day`;
      if (!k || !k.day) continue;
      if (k.day < b.camp_start || k.day > b.bout_day) return { field, label: 'Planned mass', reason: `is ${k.day}, outside the camp (${b.camp_start} to ${b.bout_day})` };
      if (prev && k.day <= prev) return { field, label: 'Planned mass', reason: `is ${k.day}; path days must be in order, each after the one before (${prev})` };
      prev = k.day;
    }
    for (const [i, w] of (b.weeks || []).entries()) {
      const bad = checkWeek(`body.weeks[${i}]`, w || {}, Number.isFinite(start) ? start + 7 * i * DAY : NaN);
      if (bad) return bad;
    }
    return null;
  },
};

const RFC3339 = /^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?(Z|[+-]\d\d:\d\d)$/;
const zoneOK = (z) => {
  if (z === 'Local' || z.trim() !== z) return false;
  try { new Intl.DateTimeFormat('en-CA', { timeZone: z }); return true; } catch (_) { return false; }
};
const dayIn = (ms, zone) => new Intl.DateTimeFormat('en-CA', { timeZone: zone, year: 'numeric', month: '2-digit', day: '2-digit' }).format(new Date(ms));

// checkWeek is the hub's check of one plan week's content (emphases,
// planned rounds, travel); start is the week's first day (ms, UTC).
function checkWeek(f, w, start) {
  for (const [name, group] of [['strength', 'Strength emphasis'], ['conditioning', 'Conditioning emphasis']]) {
    const e = w[name];
    if (!e || !Array.isArray(e.ids)) continue;
    const field = `${f}.${name}.ids`;
    const allowed = VOCAB.emphases.filter((x) => x.groups.includes(name)).map((x) => x.id);
    if (e.ids.length > VOCAB.limits.max_emphasis_ids) return { field, label: group, reason: `has ${e.ids.length} emphases; at most ${VOCAB.limits.max_emphasis_ids} a week` };
    const seen = new Set();
    for (const [j, id] of e.ids.entries()) {
      if (id === '') return { field: `${field}[${j}]`, label: group, reason: `is required: one of ${allowed.join(', ')}` };
      if (seen.has(id)) return { field: `${field}[${j}]`, label: group, reason: `${JSON.stringify(id)} is listed twice` };
      seen.add(id);
    }
    if (seen.has('none') && e.ids.length > 1) return { field, label: group, reason: 'holds "none" with other emphases; use either' };
  }
  if (Number.isFinite(w.hard_rounds) && Number.isFinite(w.spar_rounds) && w.hard_rounds > w.spar_rounds) {
    return { field: `${f}.hard_rounds`, label: 'Planned hard rounds', reason: `is ${w.hard_rounds}, more than the ${w.spar_rounds} sparring rounds planned that week` };
  }
  const t = w.travel;
  if (!t) return null;
  const tf = `${f}.travel`;
  const label = 'Travel';
  const zone = (k, what) => {
    if (!t[k]) return { field: `${tf}.${k}`, label, reason: `is required: ${what}` };
    if (!zoneOK(t[k])) return { field: `${tf}.${k}`, label, reason: `must be an IANA time zone such as Europe/Madrid or Asia/Bangkok; got ${JSON.stringify(t[k])}` };
    return null;
  };
  const z = zone('from_zone', 'the time zone of the place left, such as Europe/Madrid') || zone('to_zone', 'the time zone of the destination, such as Asia/Bangkok');
  if (z) return z;
  const dep = RFC3339.test(t.depart_at || '') ? Date.parse(t.depart_at) : NaN;
  if (!Number.isFinite(dep)) return { field: `${tf}.depart_at`, label, reason: `must be the departure date and time in RFC 3339 with offset (e.g. 2026-03-02T09:30:00+00:00); got ${JSON.stringify(t.depart_at || '')}` };
  const arr = RFC3339.test(t.arrive_at || '') ? Date.parse(t.arrive_at) : NaN;
  if (!Number.isFinite(arr)) return { field: `${tf}.arrive_at`, label, reason: `must be the arrival date and time in RFC 3339 with offset (e.g. 2026-03-02T21:15:00+07:00); got ${JSON.stringify(t.arrive_at || '')}` };
  if (!(arr > dep)) return { field: `${tf}.arrive_at`, label, reason: `is ${t.arrive_at}, not after the departure ${t.depart_at}` };
  const h = (arr - dep) / 3600000;
  if (h > VOCAB.limits.max_travel_hours) return { field: `${tf}.arrive_at`, label, reason: `is ${h.toFixed(0)} h after the departure; a journey is at most ${VOCAB.limits.max_travel_hours} h — check the dates` };
  if (Number.isFinite(start)) {
    const d = dayIn(dep, t.from_zone);
    const first = new Date(start).toISOString().slice(0, 10);
    const last = new Date(start + 6 * DAY).toISOString().slice(0, 10);
    if (d < first || d > last) return { field: `${tf}.depart_at`, label, reason: `is on ${d} (${t.from_zone}), outside this week (${first} to ${last}); plan the journey in the week it leaves` };
  }
  return null;
}

// checkBody answers as the hub would for a body of a kind: null when the
// hub would keep it, else {field, reason, label}. Fields are checked in
// the registry's order, then one field against another.
export function checkBody(kind, body, year = correctedNow().getFullYear()) {
  const k = VOCAB.kinds[kind];
  if (!k) return { field: 'kind', reason: `"${kind}" is not a record kind`, label: 'Kind' };
  for (const f of k.fields) {
    const bad = checkField(f, body || {}, year);
    if (bad) return bad;
  }
  return cross[kind] ? cross[kind](body || {}) : null;
}

// CheckError is a refusal on this device, before anything was saved.
export class CheckError extends Error {
  constructor(kind, bad) {
    super(`${bad.label}: ${bad.reason}`);
    this.kind = kind;
    this.field = bad.field;
    this.reason = bad.reason;
    this.label = bad.label;
  }
}

// fieldOf is a field of a kind from the vocabulary (label, unit, limits).
export function fieldOf(kind, path) {
  return VOCAB.kinds[kind].fields.find((f) => f.path === path);
}

// kindLabel is the words for one entry of a kind.
export function kindLabel(kind) {
  return (VOCAB.kinds[kind] || {}).label || kind;
}

// Words for the fields every record carries.
const COMMON = {
  id: 'Entry id', kind: 'Kind', athlete: 'Athlete', day: 'Day', at: 'Time of the entry', device: 'Device',
  gen: 'Restore counter', 'stamp.l': 'Time stamp', 'stamp.c': 'Time stamp', n: 'Entry counter', op: 'Operation', body: 'Entry', record: 'Entry',
};

// fieldWords names a field the hub named by its path ("body.path[2].mass_kg")
// in words ("Planned mass"), for a coach.
export function fieldWords(kind, path) {
  const p = String(path || '').replace(/^mutations\[\d+\]\.(record\.)?/, '').replace(/^record\./, '');
  if (!p) return '';
  const k = VOCAB.kinds[kind];
  const f = k && k.fields.find((x) => x.path === p.replace(/\[\d+\]/g, '[]'));
  if (f) {
    const i = p.match(/\[(\d+)\]/);
    return i ? `${f.label} (${Number(i[1]) + 1}.)` : f.label;
  }
  return COMMON[p] || p.replace(/^body\./, '').replace(/_/g, ' ');
}
