// Words, units and small helpers shared by the coach's screens.
import { html } from '../ui.js';
import { KG_PER_LB, localDay } from '../record.js';
import { testLine } from '../testwords.js';
import { VOCAB } from '../vocab.js';

// Plain-words names of the hub's flag rules, from its registry (rule ids are fixed).
export const RULE_NAMES = Object.fromEntries(VOCAB.rules.map((r) => [r.id, r.name]));
export const ruleName = (id) => RULE_NAMES[id] || 'Finding';

// paramOf: a rule's setting from the hub's tables (its words and unit).
function paramOf(tables, name) {
  if (!tables || !tables.rules || !name) return null;
  const [rule, p] = name.split('.');
  const r = tables.rules.find((x) => x.id === rule);
  return r ? (r.params || []).find((x) => x.name === p) || null : null;
}

// settingWords: the threshold a flag used, in words with its value
// ("Threshold: hard sparring rounds in the window, 15 hard rounds") —
// never the setting's key.
export function settingWords(f, tables, units) {
  if (f.threshold === null || f.threshold === undefined) return '';
  const p = paramOf(tables, f.threshold_name);
  const v = num(f.threshold, f.unit, units);
  if (!p || !p.help) return '';
  return `Threshold: ${p.help}, ${v}. Each fighter's thresholds can be changed under Flag thresholds, from their charts.`;
}

// flagTitles gives each flag of one fighter's day a heading of its own:
// the hub's title where it sends one, else the rule's name, told apart by
// the setting it crossed when two flags share a rule. Returns a Map.
export function flagTitles(fs, tables) {
  const base = (f) => f.title || ruleName(f.rule);
  const n = new Map();
  for (const f of fs) n.set(base(f), (n.get(base(f)) || 0) + 1);
  const out = new Map();
  const seen = new Set();
  for (const f of fs) {
    let t = base(f);
    if (n.get(t) > 1) {
      const p = paramOf(tables, f.threshold_name);
      if (p && p.help) t = `${t}: ${p.help}`;
    }
    for (let i = 2; seen.has(t); i++) t = `${base(f)} (${i})`;
    seen.add(t);
    out.set(f, t);
  }
  return out;
}

// clockOfStamp: "14:05" from an RFC 3339 instant, on this device's clock.
export function clockOfStamp(at) {
  const t = Date.parse(at || '');
  if (!Number.isFinite(t)) return '';
  const d = new Date(t);
  return `${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`;
}

// The four states a card can be in, most serious first.
export const LEVELS = [
  ['alert', 'Act today'],
  ['watch', 'Keep an eye on'],
  ['info', 'Worth knowing'],
  ['forming', 'Not enough data yet'],
];
export const levelOf = (f) => (f.status === 'forming' ? 'forming' : f.level);
export const levelWord = (l) => (LEVELS.find((x) => x[0] === l) || [l, l])[1];
export const levelRank = (l) => { const i = LEVELS.findIndex((x) => x[0] === l); return i < 0 ? 9 : i; };

// Level marker: a shape as well as a colour, so it reads in grey print too.
export function LevelMark({ level }) {
  return html`<span class=${`lv lv-${level}`} aria-hidden="true"></span>`;
}

// ---- numbers with units ----
export const LB_PER_KG = 1 / KG_PER_LB;

// mass shows a kg value in the athlete's units (0.45359237 kg per lb, exact).
export function mass(kg, units, d = 1) {
  if (kg === null || kg === undefined || !Number.isFinite(kg)) return '–';
  return `${(units === 'lb' ? kg / KG_PER_LB : kg).toFixed(d)} ${units === 'lb' ? 'lb' : 'kg'}`;
}
export function massNum(kg, units) {
  if (kg === null || kg === undefined || !Number.isFinite(kg)) return null;
  return units === 'lb' ? kg / KG_PER_LB : kg;
}

// decimals for a unit as the flag reasons use them
const DEC = { cm: 1, kg: 1, '%': 1, '%/week': 2, ratio: 2, USG: 3, points: 1, AU: 0, days: 0, rounds: 0, 'hard rounds': 0, h: 0, z: 1 };

// num formats a flag number with its unit; masses follow the athlete's units.
export function num(v, unit, units) {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–';
  if (unit === 'kg') return mass(v, units);
  const d = DEC[unit] !== undefined ? DEC[unit] : 2;
  const s = v.toFixed(d);
  if (!unit || unit === 'ratio') return s;
  if (unit === 'USG') return s;
  if (unit === '%' || unit === '%/week') return `${s} ${unit}`;
  return `${s} ${unitFor(unit, v, d)}`;
}

// unitFor: a counted unit in the singular for exactly one ("1 day").
const ONE = { days: 'day', rounds: 'round', 'hard rounds': 'hard round', 'check-ins': 'check-in' };
export function unitFor(unit, v, d = 0) {
  return ONE[unit] && Number(v.toFixed(d)) === 1 ? ONE[unit] : unit;
}

export function fmtN(x, d = 1) { return Number.isFinite(x) ? x.toFixed(d) : '–'; }

// ---- calendar days (YYYY-MM-DD strings, counted in UTC so no zone shifts) ----
export function addDays(day, n) {
  const t = Date.UTC(+day.slice(0, 4), +day.slice(5, 7) - 1, +day.slice(8, 10)) + n * 86400000;
  return new Date(t).toISOString().slice(0, 10);
}
export function dayDiff(a, b) {
  const p = (d) => Date.UTC(+d.slice(0, 4), +d.slice(5, 7) - 1, +d.slice(8, 10));
  return Math.round((p(b) - p(a)) / 86400000);
}
export const isDay = (s) => typeof s === 'string' && /^\d{4}-\d{2}-\d{2}$/.test(s);
export function today() { return localDay(); }

const WD = ['Sunday', 'Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday'];
const MO = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December'];
export function longDay(day) {
  const d = new Date(Date.UTC(+day.slice(0, 4), +day.slice(5, 7) - 1, +day.slice(8, 10)));
  return `${WD[d.getUTCDay()]} ${d.getUTCDate()} ${MO[d.getUTCMonth()]} ${d.getUTCFullYear()}`;
}
export function shortDay(day) {
  const d = new Date(Date.UTC(+day.slice(0, 4), +day.slice(5, 7) - 1, +day.slice(8, 10)));
  return `${WD[d.getUTCDay()].slice(0, 3)} ${d.getUTCDate()} ${MO[d.getUTCMonth()].slice(0, 3)}`;
}

// monthYear names a day's month: "Jun 2026".
export function monthYear(day) {
  return `${MO[+day.slice(5, 7) - 1].slice(0, 3)} ${day.slice(0, 4)}`;
}

// query builds a path with search parameters, leaving out empty ones.
export function query(path, params) {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== null && v !== '') q.set(k, v);
  const s = q.toString();
  return s ? `${path}?${s}` : path;
}

// recordSummary describes a record in a line, for a flag's inputs.
export function recordSummary(r, units) {
  const b = r.body || {};
  const list = (xs, u) => (Array.isArray(xs) ? xs.map((x) => fmtN(x, 1)).join(', ') + ' ' + u : '');
  switch (r.kind) {
    case 'checkin': {
      const parts = [];
      if (b.mass_kg != null) parts.push(`mass ${mass(b.mass_kg, units)}`);
      const w = ['sleep', 'fatigue', 'soreness', 'stress', 'mood'].filter((k) => b[k] != null);
      if (w.length) parts.push('wellness ' + w.map((k) => `${k} ${b[k]}`).join(', '));
      if (b.sleep_h != null) parts.push(`slept ${b.sleep_h} h`);
      if (b.rhr_bpm != null) parts.push(`resting HR ${b.rhr_bpm} bpm`);
      if (b.usg != null) parts.push(`USG ${Number(b.usg).toFixed(3)}`);
      return 'Check-in: ' + (parts.join('; ') || 'note only');
    }
    case 'fitness_test': case 'strength': return testLine(r);
    case 'jump': if (b.test === 'dj') return testLine(r); return `CMJ: ${b.heights_cm ? list(b.heights_cm, 'cm') : list(b.flight_ms, 'ms flight')}${b.best_cm ? `; best ${fmtN(b.best_cm)} cm, mean ${fmtN(b.mean_cm)} cm` : ''}`;
    case 'round': return `Round: ${b.activity || ''}, intensity ${b.intensity || '–'} of 3, ${Math.round((b.seconds || 0) / 60)} min${b.partner ? `, with ${b.partner}` : ''}`;
    case 'session': return `Session: ${b.type || ''}${b.focus ? ` (${b.focus.replace('_', ' ')})` : ''}, ${b.minutes} min at RPE ${b.rpe}${b.load_au != null ? ` = ${fmtN(b.load_au, 0)} AU` : ''}`;
    case 'intervals': return `Intervals: ${b.modality || ''} ${b.reps || ''}×${b.work_s || ''} s / ${b.rest_s || ''} s${b.rpe != null ? `, RPE ${b.rpe}` : ''}`;
    case 'incident': return `Incident: ${(b.type || '').replace('_', ' ')}${b.note ? ` — ${b.note}` : ''}`;
    case 'clearance': return `Clearance${b.by ? ` by ${b.by}` : ''}${b.note ? ` — ${b.note}` : ''}`;
    case 'bout': return `Bout plan: camp ${b.camp_start}, bout ${b.bout_day}, limit ${mass(b.limit_kg, units)}`;
    case 'decision': return `Decision: ${b.note}`;
    case 'weigh_in': return `${{ check: 'Check weight', official: 'Official weigh-in', fight_day: 'Fight-day weigh-in' }[b.type] || 'Weigh-in'}: ${mass(b.mass_kg, units)} at ${String(r.at || '').slice(0, 16).replace('T', ' ')}`;
    case 'rts_step': return `Return-to-sport step ${b.step}${b.supervised_by ? `, supervised by ${b.supervised_by}` : ''}`;
    default: return r.kind;
  }
}

// The mass caution, shown wherever the plan or the charts speak of mass.
export const MASS_CAUTION = 'Acute weight loss is supervised by a sports dietitian or physician and follows the sanctioning body\'s rules and local law. These numbers are prompts for the coach\'s judgement, never a reason to cut faster.';
