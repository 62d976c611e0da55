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

// blank: a required field left out or empty (a text of spaces only).
const blank = (f, v) => v === undefined || v === null || v === '' || (!!f.max_len && typeof v === 'string' && v.trim() === '');

function checkField(f, body, year) {
  const found = values(body, f.path);
  if (f.required) {
    // An array's elements are checked one by one; a plain field is also
    // refused when it is left out.
    if (!f.path.includes('[]') && found.length === 0) return { field: f.path, reason: f.required, label: f.label };
    for (const [path, v] of found) if (blank(f, v)) return { field: path, reason: f.required, label: f.label };
  }
  if (f.max_items) {
    for (const [path, arr] of values(body, f.path.slice(0, -2))) {
      if (Array.isArray(arr) && arr.length > 0 && (arr.length < f.min_items || arr.length > f.max_items)) {
        const reason = f.items_words.replace('{min}', f.min_items).replace('{max}', f.max_items).replace('{got}', arr.length);
        return { field: path, reason, label: f.label };
      }
    }
  }
  for (const [path, v] of found) {
    const bad = (reason) => ({ field: path, reason, label: f.label });
    if (f.min !== undefined && typeof v === 'number') {
      const [lo, hi] = range(f, year);
      const out = Number.isNaN(v) || (f.min_above ? v <= lo : v < lo) || v > hi;
      if (out) return bad(fill(f.words || VOCAB.range_words, f, v, year));
      if (f.step > 0 && Math.abs(v / f.step - Math.round(v / f.step)) > 1e-9 && f.step_words) return bad(fill(f.step_words, f, v, year));
    }
    if (f.enum && typeof v === 'string' && v !== '' && !f.enum.includes(v)) {
      return bad(VOCAB.not_a_choice_words);
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

// dayWords names a YYYY-MM-DD day in a refusal as the hub's DayWords
// does, with its year: "Sat 12 Dec 2026"; anything else as it is.
const WD = ['Sun', 'Mon', 'Tue', 'Wed', 'Thu', 'Fri', 'Sat'];
const MO = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];
function dayWords(s) {
  if (typeof s !== 'string' || !/^\d{4}-\d{2}-\d{2}$/.test(s)) return s;
  const d = new Date(Date.UTC(+s.slice(0, 4), +s.slice(5, 7) - 1, +s.slice(8, 10)));
  return `${WD[d.getUTCDay()]} ${d.getUTCDate()} ${MO[d.getUTCMonth()]} ${d.getUTCFullYear()}`;
}

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
    if (!any) return { field: 'body', reason: 'a check-in needs at least one entry: body mass, hours of sleep, the wellness items, resting heart rate, USG or a note', label: 'Check-in' };
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
    return prescription(b);
  },
  fitness_test: (b) => fitnessTest(b),
  strength: (b) => strength(b),
  jump: (b) => attemptsGiven(b) || dropJump(b),
  bout(b) {
    const start = dayNum(b.camp_start);
    const bout = dayNum(b.bout_day);
    if (!Number.isFinite(start) || !Number.isFinite(bout)) return null; // the screen asks for both days
    if (bout < start) return { field: 'body.bout_day', label: 'Bout day', reason: `is ${dayWords(b.bout_day)}, before the camp starts on ${dayWords(b.camp_start)}` };
    const days = Math.round((bout - start) / DAY);
    if (days > VOCAB.limits.max_camp_days) {
      return { field: 'body.bout_day', label: 'Bout day', reason: `is ${days} days after the camp start; a camp is at most ${VOCAB.limits.max_camp_days} days — check the year` };
    }
    const wiDay = b.weigh_in ? weighInDay(b.weigh_in, b.weigh_in_zone) : '';
    if (wiDay) {
      if (wiDay > b.bout_day) return { field: 'body.weigh_in', label: 'Weigh-in', reason: `is on ${dayWords(wiDay)}, after the bout day, ${dayWords(b.bout_day)}` };
      if (wiDay < b.camp_start) return { field: 'body.weigh_in', label: 'Weigh-in', reason: `is on ${dayWords(wiDay)}, before the camp starts on ${dayWords(b.camp_start)}` };
      const gap = Math.round((bout - dayNum(wiDay)) / DAY);
      if (b.weigh_in_type === 'same_day' && gap !== 0) {
        return { field: 'body.weigh_in_type', label: 'Weigh-in', reason: `is set to "Same day", but it is on ${dayWords(wiDay)} and the bout on ${dayWords(b.bout_day)}; choose "Day before" or move the weigh-in` };
      }
      const most = VOCAB.limits.max_day_before_days;
      if (b.weigh_in_type === 'day_before' && (gap < 1 || gap > most)) {
        return { field: 'body.weigh_in_type', label: 'Weigh-in', reason: `is set to "Day before", so it must be 1 to ${most} days before the bout on ${dayWords(b.bout_day)}; it is on ${dayWords(wiDay)}` };
      }
    }
    let prev = '';
    for (const [i, k] of (b.path || []).entries()) {
      const field = `body.path[${i}].day`;
      if (!k || !k.day) continue;
      if (k.day < b.camp_start || k.day > b.bout_day) return { field, label: 'Planned mass', reason: `is ${dayWords(k.day)}, outside the camp (${dayWords(b.camp_start)} to ${dayWords(b.bout_day)})` };
      if (prev && k.day <= prev) return { field, label: 'Planned mass', reason: `is ${dayWords(k.day)}; path days must be in order, each after the one before (${dayWords(prev)})` };
      prev = k.day;
    }
    for (const [i, w] of (b.weeks || []).entries()) {
      const bad = checkWeek(`body.weeks[${i}]`, w || {}, Number.isFinite(start) ? start + 7 * i * DAY : NaN);
      if (bad) return bad;
    }
    return boutFightWeek(b);
  },
  incident(b) {
    const f = 'body.loss_of_consciousness';
    const label = 'Loss of consciousness';
    if (b.type === 'knockout_loc' && b.loss_of_consciousness === false) {
      return { field: f, label, reason: 'is false, but the incident is a knockout with loss of consciousness' };
    }
    if (b.loc_seconds !== undefined && b.loc_seconds !== null && b.loss_of_consciousness !== true && b.type !== 'knockout_loc') {
      return { field: f, label, reason: 'is not marked, but how long consciousness was lost is given' };
    }
    if (b.loss_of_consciousness === true && b.type === 'injury') {
      return { field: f, label, reason: 'goes with a head incident; record a head knock, knockdown, stoppage or knockout' };
    }
    if (b.clinician_day) {
      const bad = dayRefusal(b.clinician_day);
      if (bad) return { field: 'body.clinician_day', label: "Clinician's date", reason: bad };
      if (!(b.seen_by || '').trim()) return { field: 'body.seen_by', label: 'Clinician who saw the fighter', reason: "is required with a clinician's date: the clinician who set it" };
    }
    return null;
  },
  // A threshold names a flag rule and one of its settings (their limits
  // are the registry's fields); in the hub's order: rule ids, then names.
  settings(b) {
    const t = b.thresholds;
    if (!t || typeof t !== 'object') return null;
    for (const id of Object.keys(t).sort()) {
      const rule = VOCAB.rules.find((r) => r.id === id);
      if (!rule) return { field: `body.thresholds.${id}`, label: 'Flag', reason: 'is not a flag rule' };
      for (const k of Object.keys(t[id] || {}).sort()) {
        if (!rule.params.includes(k)) return { field: `body.thresholds.${id}.${k}`, label: 'Setting', reason: 'is not a setting of this flag rule' };
      }
    }
    return null;
  },
  weigh_in(b) {
    if (b.made !== undefined && b.made !== null && b.type !== 'official') {
      return { field: 'body.made', label: 'Made the limit', reason: `goes with the official weigh-in only; a ${String(b.type).replace(/_/g, '-')} weigh-in is judged against its cap` };
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
      if (id === '') return { field: `${field}[${j}]`, label: group, reason: VOCAB.choose_one_words };
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

// ---- tests and prescriptions (the hub's records/tests.go, word for word) ----

const L = () => VOCAB.limits;
const has = (b, k) => b[k] !== undefined && b[k] !== null;
const between = (field, label, v, lo, hi, unit) => (Number.isNaN(v) || v < lo || v > hi
  ? { field, label, reason: `must be between ${fmtNum(lo)} and ${fmtNum(hi)}${unit ? ' ' + unit : ''}; got ${fmtNum(v)}` } : null);

// stageWords is the refusal of a 30-15 IFT stage the table from a start
// speed does not have.
export const iftStages = (start) => Math.round((L().ift_top_kmh - start) / L().ift_step_kmh) + 1;
const stageWords = (start, stage) => `must be between 1 and ${iftStages(start)} (the stages of the test from ${start} km/h, ${start} to ${L().ift_top_kmh} km/h); got ${stage}`;
const TEST_WORDS = { ift_30_15: 'a 30-15 IFT', repeated_sprint: 'a repeated-sprint test', hr_max: 'a measured maximal heart rate' };
const BELONGS = [['start_kmh', 'ift_30_15'], ['stage', 'ift_30_15'], ['vift_kmh', 'ift_30_15'], ['sprint_s', 'repeated_sprint'], ['distance_m', 'repeated_sprint'],
  ['best_s', 'repeated_sprint'], ['sdec_pct', 'repeated_sprint'], ['fatigue_pct', 'repeated_sprint'], ['hr_max_bpm', 'hr_max']];

function fitnessTest(b) {
  const l = L();
  const protocols = Object.keys(TEST_WORDS);
  if (!b.protocol) return { field: 'body.protocol', label: 'Test', reason: VOCAB.choose_one_words };
  for (const [k, p] of BELONGS) {
    if (has(b, k) && p !== b.protocol) return { field: `body.${k}`, label: 'Test', reason: `belongs to ${TEST_WORDS[p]}, not ${TEST_WORDS[b.protocol]}` };
  }
  if (b.protocol === 'ift_30_15') {
    const start = has(b, 'start_kmh') ? b.start_kmh : l.ift_start_kmh;
    if (start !== l.ift_start_kmh && start !== l.ift_alt_start_kmh) {
      return { field: 'body.start_kmh', label: 'First stage', reason: `must be ${l.ift_start_kmh} or ${l.ift_alt_start_kmh} km/h (the first stage's speed); got ${fmtNum(start)}` };
    }
    if (has(b, 'stage')) {
      if (b.stage < 1 || b.stage > iftStages(start)) return { field: 'body.stage', label: 'Last stage completed', reason: stageWords(start, b.stage) };
    } else if (has(b, 'vift_kmh')) {
      const k = (b.vift_kmh - start) / l.ift_step_kmh;
      const r = Math.round(k);
      if (Math.abs(k - r) > 1e-9 || r < 0 || b.vift_kmh > l.ift_top_kmh + 1e-9) {
        return { field: 'body.vift_kmh', label: 'V_IFT', reason: `the test has no stage at ${fmtNum(b.vift_kmh)} km/h: stages run from ${start} to ${l.ift_top_kmh} km/h in steps of 0.5` };
      }
    } else {
      return { field: 'body.stage', label: 'Last stage completed', reason: `is required: the last stage completed, 1 to ${iftStages(start)} (${start} to ${l.ift_top_kmh} km/h)` };
    }
  }
  if (b.protocol === 'repeated_sprint') {
    const t = Array.isArray(b.sprint_s) ? b.sprint_s : [];
    if (t.length < l.min_sprints || t.length > l.max_sprints) {
      return { field: 'body.sprint_s', label: 'Sprint times', reason: `must hold ${l.min_sprints} to ${l.max_sprints} sprint times in s; got ${t.length}` };
    }
    for (const [i, x] of t.entries()) {
      const bad = between(`body.sprint_s[${i}]`, 'Sprint time', x, l.min_sprint_s, l.max_sprint_s, 's');
      if (bad) return bad;
    }
    if (has(b, 'distance_m')) {
      const bad = between('body.distance_m', 'Sprint length', b.distance_m, l.min_sprint_m, l.max_sprint_m, 'm');
      if (bad) return bad;
    }
  }
  if (b.protocol === 'hr_max') {
    if (!has(b, 'hr_max_bpm')) return { field: 'body.hr_max_bpm', label: 'Maximal heart rate', reason: `is required: the highest heart rate measured, ${l.min_hr_max} to ${l.max_hr_max} bpm` };
    const bad = between('body.hr_max_bpm', 'Maximal heart rate', b.hr_max_bpm, l.min_hr_max, l.max_hr_max, 'bpm');
    if (bad) return bad;
    if (has(b, 'hr_peak')) return { field: 'body.hr_peak', label: 'Peak heart rate', reason: 'belongs to a 30-15 IFT or repeated-sprint test; a maximum measured on its own is a maximal heart rate test' };
  }
  return null;
}

// risingVelocity finds the first set faster than a set at a lighter load.
function risingVelocity(pts) {
  for (let i = 0; i < pts.length; i++) {
    for (let j = 0; j < i; j++) {
      const a = pts[i], c = pts[j];
      if ((a.load > c.load && a.v > c.v) || (a.load < c.load && a.v < c.v)) return [i, j];
    }
  }
  return null;
}

function strength(b) {
  const l = L();
  if (typeof b.exercise !== 'string' || b.exercise.trim() === '') {
    return { field: 'body.exercise', label: 'Exercise', reason: `is required: the exercise tested, e.g. ${VOCAB.exercises.slice(0, 3).join(', ')}` };
  }
  const sets = Array.isArray(b.sets) ? b.sets : [];
  if (sets.length < 1 || sets.length > l.max_strength_sets) return { field: 'body.sets', label: 'Sets', reason: `must hold 1 to ${l.max_strength_sets} sets; got ${sets.length}` };
  const pts = [];
  sets.forEach((s, i) => { if (s && has(s, 'mpv_ms')) pts.push({ load: s.load_kg, v: s.mpv_ms, set: i }); });
  const r = risingVelocity(pts);
  if (r) {
    let [hi, lo] = r;
    if (pts[hi].load < pts[lo].load) [hi, lo] = [lo, hi];
    return {
      field: `body.sets[${pts[hi].set}].mpv_ms`, label: 'Bar speed',
      reason: `is ${fmtNum(pts[hi].v)} m/s at ${fmtNum(pts[hi].load)} kg, faster than ${fmtNum(pts[lo].v)} m/s at the lighter ${fmtNum(pts[lo].load)} kg (set ${pts[lo].set + 1}): bar speed falls as the load rises — check both entries`,
    };
  }
  return null;
}

// attemptsGiven: a jump test holds its attempts as heights or flight times.
function attemptsGiven(b) {
  const some = (a) => Array.isArray(a) && a.length > 0;
  if (some(b.flight_ms) || some(b.heights_cm)) return null;
  const l = L();
  return { field: 'body.heights_cm', label: 'Jump height', reason: `is required: ${l.min_attempts} to ${l.max_attempts} attempts, as jump heights in cm or flight times in ms` };
}

function dropJump(b) {
  const l = L();
  const test = b.test || 'cmj';
  if (test !== 'dj') {
    for (const k of ['drop_cm', 'contact_ms', 'rsi', 'rsi_attempts']) {
      if (has(b, k)) return { field: `body.${k}`, label: 'Drop jump', reason: `belongs to a drop jump (test dj), not a ${test}` };
    }
    return null;
  }
  if (!has(b, 'drop_cm')) return { field: 'body.drop_cm', label: 'Drop height', reason: `is required: the height dropped from, ${l.min_drop_cm} to ${l.max_drop_cm} cm` };
  let bad = between('body.drop_cm', 'Drop height', b.drop_cm, l.min_drop_cm, l.max_drop_cm, 'cm');
  if (bad) return bad;
  const attempts = (Array.isArray(b.flight_ms) && b.flight_ms.length ? b.flight_ms : (b.heights_cm || [])).length;
  const contact = Array.isArray(b.contact_ms) ? b.contact_ms : [];
  if (contact.length !== attempts) {
    return { field: 'body.contact_ms', label: 'Ground contact', reason: `needs one ground contact time per attempt: ${attempts} attempts, ${contact.length} contact times` };
  }
  for (const [i, x] of contact.entries()) {
    bad = between(`body.contact_ms[${i}]`, 'Ground contact', x, l.min_contact_ms, l.max_contact_ms, 'ms');
    if (bad) return bad;
  }
  return null;
}

// dayRefusal answers as the hub's day check does (null when it is a day).
function dayRefusal(s) {
  if (typeof s !== 'string' || s.length !== 10 || s[4] !== '-' || s[7] !== '-') return `must be a calendar day written YYYY-MM-DD; got ${JSON.stringify(s)}`;
  const t = dayNum(s);
  if (!Number.isFinite(t) || new Date(t).toISOString().slice(0, 10) !== s) return `${s} is not a day of the calendar (YYYY-MM-DD)`;
  if (Number(s.slice(0, 4)) < 2000) return `is ${s}, before 2000; check the year`;
  return null;
}

const wall = (s) => `${s.slice(0, 10)} ${s.slice(11, 16)}`;

// boutFightWeek: the bout's start, its weigh-in rules and its stand-down
// rule sets, in the hub's words (records.checkBoutFightWeek).
function boutFightWeek(b) {
  const L = VOCAB.limits;
  if (b.bout_at) {
    const label = 'Bout starts';
    if (!RFC3339.test(b.bout_at) || !Number.isFinite(Date.parse(b.bout_at))) {
      return { field: 'body.bout_at', label, reason: `must be the bout's start with the venue's offset, e.g. 2026-02-28T20:30:00-07:00; got ${JSON.stringify(b.bout_at)}` };
    }
    if (b.bout_at.slice(0, 10) !== b.bout_day) return { field: 'body.bout_at', label, reason: `is on ${dayWords(b.bout_at.slice(0, 10))}, but the bout day is ${dayWords(b.bout_day)}` };
    const wi = Date.parse(b.weigh_in);
    if (Number.isFinite(wi)) {
      const h = (Date.parse(b.bout_at) - wi) / 3600000;
      if (h <= 0) return { field: 'body.bout_at', label, reason: `is ${wall(b.bout_at)}, not after the weigh-in at ${wall(b.weigh_in)}` };
      if (h > L.max_bout_after_hours) return { field: 'body.bout_at', label, reason: `is ${h.toFixed(1)} h after the weigh-in; at most ${L.max_bout_after_hours} h` };
    }
  }
  const r = b.rules;
  if (r) {
    const seen = new Set();
    for (const [i, c] of (r.check_weights || []).entries()) {
      const f = `body.rules.check_weights[${i}]`;
      const label = 'Check weight';
      if (!(c.days_before >= 1 && c.days_before <= L.max_check_days)) {
        return { field: f + '.days_before', label, reason: `must be between 1 and ${L.max_check_days} days before the weigh-in; got ${c.days_before}` };
      }
      if (seen.has(c.days_before)) return { field: f + '.days_before', label, reason: `a check weight ${c.days_before} days out is already set` };
      seen.add(c.days_before);
      const bad = between(f + '.over_limit_pct', label, c.over_limit_pct, 0, L.max_over_limit_pct, '% over the limit');
      if (bad) return bad;
    }
    const fd = r.fight_day;
    if (fd) {
      const p = 'body.rules.fight_day';
      const label = 'Fight-day cap';
      const lb = fd.over_limit_lb !== undefined && fd.over_limit_lb !== null;
      const pct = fd.over_official_pct !== undefined && fd.over_official_pct !== null;
      if (lb && pct) return { field: p, label, reason: 'give either pounds over the limit or percent over the official weigh-in mass, not both' };
      if (lb) return between(p + '.over_limit_lb', label, fd.over_limit_lb, 0, L.max_fight_day_lb, 'lb over the limit');
      if (pct) return between(p + '.over_official_pct', label, fd.over_official_pct, 0, L.max_fight_day_pct, '% over the official weigh-in mass');
      return { field: p, label, reason: 'give pounds over the limit or percent over the official weigh-in mass' };
    }
  }
  const sets = b.stand_down_sets || [];
  if (sets.length > L.max_stand_down_sets) return { field: 'body.stand_down_sets', label: 'Stand-down rules', reason: `may name at most ${L.max_stand_down_sets} rule sets` };
  for (const [i, id] of sets.entries()) {
    if (!VOCAB.stand_down_sets.includes(id)) {
      const field = `body.stand_down_sets[${i}]`;
      if (id === '') return { field, label: 'Stand-down rules', reason: VOCAB.choose_one_words };
      return { field, label: 'Stand-down rules', reason: VOCAB.not_a_choice_words };
    }
  }
  return null;
}

function prescription(b) {
  const l = L();
  if (has(b, 'pct_vift') && !has(b, 'vift_kmh')) return { field: 'body.vift_kmh', label: 'V_IFT', reason: "is required with a share of V_IFT: the fighter's V_IFT from a 30-15 IFT, in km/h" };
  if (!has(b, 'pct_vift') && has(b, 'vift_kmh')) return { field: 'body.pct_vift', label: 'Share of V_IFT', reason: `is required with a V_IFT: the share of it to run at, ${l.min_pct_vift} to ${l.max_pct_vift} %` };
  const band = has(b, 'hr_lo_pct') || has(b, 'hr_hi_pct') || has(b, 'hr_max_bpm');
  if (!band) {
    if (b.hr_max_from) return { field: 'body.hr_max_from', label: 'HRmax from', reason: "belongs to a heart-rate band: give the band's lower and upper ends and the maximal heart rate too" };
    return null;
  }
  if (!has(b, 'hr_lo_pct')) return { field: 'body.hr_lo_pct', label: 'Heart-rate band', reason: `is required for a heart-rate band: its lower end, ${l.min_pct_hrmax} to ${l.max_pct_hrmax} % of HRmax` };
  if (!has(b, 'hr_hi_pct')) return { field: 'body.hr_hi_pct', label: 'Heart-rate band', reason: `is required for a heart-rate band: its upper end, ${l.min_pct_hrmax} to ${l.max_pct_hrmax} % of HRmax` };
  if (b.hr_hi_pct < b.hr_lo_pct) return { field: 'body.hr_hi_pct', label: 'Heart-rate band', reason: `is ${fmtNum(b.hr_hi_pct)} %, below the band's lower end of ${fmtNum(b.hr_lo_pct)} %` };
  if (!has(b, 'hr_max_bpm')) return { field: 'body.hr_max_bpm', label: 'HRmax', reason: `is required with a heart-rate band: the HRmax the band is drawn from, ${l.min_hr_max} to ${l.max_hr_max} bpm` };
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

// ---- who may write what (the hub's write policy, server/auth) ----

const pluralOf = (k) => (VOCAB.kinds[k] ? VOCAB.kinds[k].plural : k === '' ? 'entries without a kind' : `${JSON.stringify(k)} records`);
const writtenBy = (role) => VOCAB.order.filter((k) => VOCAB.kinds[k].writers.includes(role));
function listWords(ws) {
  return ws.length < 2 ? ws.join('') : `${ws.slice(0, -1).join(', ')} and ${ws[ws.length - 1]}`;
}

function contentTrouble(role, athlete, rec, prefix) {
  if (role === 'staff' && !writtenBy('staff').includes(rec.kind)) {
    return { field: 'kind', label: 'Kind', reason: `${prefix}a staff device cannot write ${pluralOf(rec.kind)}; ask a coach` };
  }
  if (role === 'athlete') {
    const mine = writtenBy('athlete');
    if (!mine.includes(rec.kind)) {
      return { field: 'kind', label: 'Kind', reason: `${prefix}an athlete's device can write ${listWords(mine.map(pluralOf))}, not ${pluralOf(rec.kind)}` };
    }
    if (!athlete) return { field: 'athlete', label: 'Athlete', reason: `${prefix}this device is joined to no athlete; ask the coach to join it again` };
    if ((rec.athlete || '') !== athlete) {
      return { field: 'athlete', label: 'Athlete', reason: `${prefix}this device belongs to one athlete; it cannot write ${rec.athlete ? "another athlete's" : "the whole camp's"} entries` };
    }
  }
  return null;
}

// rightsTrouble answers as the hub's write policy would for this device
// (role and athlete as the hub issued them at join; '' on the coach's
// laptop or a device not joined, which the hub does not limit by kind):
// null when it may write rec over old (the version it replaces, if any),
// else {field, reason, label} in the hub's words.
export function rightsTrouble(role, athlete, rec, old) {
  if (role !== 'staff' && role !== 'athlete') return null;
  const bad = contentTrouble(role, athlete, rec, '');
  if (bad || !old) return bad;
  const was = contentTrouble(role, athlete, old, 'the stored version of this record: ');
  if (was) return was;
  if (role === 'athlete' && old.device !== rec.device) {
    return { field: 'id', label: 'Entry', reason: `this ${kindLabel(old.kind)} was last written by another device; an athlete's device changes only its own entries — ask the coach` };
  }
  return null;
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
