// Record helpers shared by the pages and the service worker: the
// last-writer-wins order of sync.Compare, the local calendar day, RFC 3339
// times with offset, and unit conversions.
import { cmpHLC } from './hlc.js';

// bodyString is the body as the comparison's last tie-break sees it.
export function bodyString(r) {
  if (r.body === undefined || r.body === null) return '';
  return typeof r.body === 'string' ? r.body : JSON.stringify(r.body);
}

function cmpStr(a, b) {
  return a < b ? -1 : a > b ? 1 : 0;
}

// versionCmp orders two versions of one record by generation, then deleted
// over live (sticky delete), then stamp, then device — sync.Compare without
// the body tie-break.
export function versionCmp(a, b) {
  const ga = a.gen || 0, gb = b.gen || 0;
  if (ga !== gb) return ga < gb ? -1 : 1;
  const da = !!a.deleted, db = !!b.deleted;
  if (da !== db) return da ? 1 : -1;
  const s = cmpHLC(a.stamp, b.stamp);
  if (s !== 0) return s;
  return cmpStr(a.device || '', b.device || '');
}

// compare is sync.Compare: a total order; keeping the greater converges.
export function compare(a, b) {
  return versionCmp(a, b) || cmpStr(bodyString(a), bodyString(b));
}

// hubWins decides a pulled version against the local one. The same version
// (same generation, delete flag, stamp and device) is taken from the hub,
// whose copy carries the derived fields; otherwise the greater wins.
export function hubWins(incoming, local) {
  if (!local) return true;
  const v = versionCmp(incoming, local);
  if (v !== 0) return v > 0;
  return bodyString(incoming) !== bodyString(local);
}

const pad = (n, w = 2) => String(n).padStart(w, '0');

// clockOffset is hub time minus this device's time (ms), learnt from the
// hub's answers: a phone whose clock is wrong still files entries under
// the right day and time.
let clockOffset = 0;
export function setClockOffset(ms) { clockOffset = Number.isFinite(ms) ? ms : 0; }
export function correctedNow() { return new Date(Date.now() + clockOffset); }

// localDay is the device's calendar day, from local date parts (never
// toISOString, which is UTC).
export function localDay(d = correctedNow()) {
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
}

// rfc3339 formats a time in local time with its UTC offset.
export function rfc3339(d = correctedNow()) {
  const off = -d.getTimezoneOffset();
  const sign = off >= 0 ? '+' : '-';
  const a = Math.abs(off);
  return `${localDay(d)}T${pad(d.getHours())}:${pad(d.getMinutes())}:${pad(d.getSeconds())}.${pad(d.getMilliseconds(), 3)}${sign}${pad(Math.floor(a / 60))}:${pad(a % 60)}`;
}

// KG_PER_LB is exact by definition (international yard and pound, 1959).
export const KG_PER_LB = 0.45359237;

export function toKg(value, units) {
  return units === 'lb' ? value * KG_PER_LB : value;
}

export function fromKg(kg, units) {
  return units === 'lb' ? kg / KG_PER_LB : kg;
}

// round to a number of decimals, for storage of converted values.
export function roundTo(x, decimals) {
  const f = 10 ** decimals;
  return Math.round(x * f) / f;
}

// G is the gravity constant for flight-time heights (9.81 m/s², as most
// sport papers use; the hub derives the stored heights itself).
export const G = 9.81;

// heightFromFlightMs: h = g·t²/8 (flight-time method), in cm.
export function heightFromFlightMs(ms) {
  const t = ms / 1000;
  return (G * t * t / 8) * 100;
}

// stats of the valid attempts: mean and best, or null when none.
export function attemptStats(values) {
  const v = values.filter((x) => typeof x === 'number' && Number.isFinite(x) && x > 0);
  if (!v.length) return null;
  return { n: v.length, mean: v.reduce((s, x) => s + x, 0) / v.length, best: Math.max(...v) };
}

// parseNum reads a typed number, accepting a decimal comma.
export function parseNum(s) {
  if (s === undefined || s === null) return NaN;
  const t = String(s).trim().replace(',', '.');
  if (t === '') return NaN;
  return Number(t);
}
