// The jump grid's reference column: the athlete's last CMJ baseline (the
// hub's 28-day mean, with its usual day-to-day noise) and today's mean
// against it in %, as typed. Display only: the jump_drop flag is the hub's.
import { html } from '../ui.js';
import { heightFromFlightMs } from '../record.js';
import { hhmm } from './standing.js';
import './style.js';

const MIN_TEST_DAYS = 5; // jump_drop needs ≥ 5 test days for a baseline (PRODUCT.md)

// todayMeanCm: the mean height of the valid attempts, heights from flight
// time attempt by attempt (h = g·t²/8) as the hub derives mean_cm.
export function todayMeanCm(values, mode) {
  const v = values.filter((x) => Number.isFinite(x) && x > 0);
  if (!v.length) return null;
  const hs = mode === 'flight' ? v.map(heightFromFlightMs) : v;
  return hs.reduce((s, x) => s + x, 0) / hs.length;
}

// relPct: today's mean relative to the baseline, in % (negative = below).
export function relPct(mean, baseline) {
  return ((mean - baseline) / baseline) * 100;
}

export function JumpRef({ id, standing, values, mode }) {
  const b = standing.byId[id];
  if (!b) {
    const t = standing.state === 'loading' ? 'asking the hub…' : standing.state === 'live' ? 'no baseline from the hub yet' : 'baseline unknown offline';
    return html`<span class="rs-ref muted" data-testid=${`jump-baseline-${id}`} data-unknown="true">${t}</span>`;
  }
  if (b.cmj_baseline_cm == null) {
    return html`<span class="rs-ref muted" data-testid=${`jump-baseline-${id}`}>baseline forming (${b.cmj_test_days} of ${MIN_TEST_DAYS} test days)</span>`;
  }
  const base = b.cmj_baseline_cm;
  const m = todayMeanCm(values, mode);
  const r = m == null ? null : relPct(m, base);
  const noise = b.cmj_noise_pct;
  return html`<span class="rs-ref" data-testid=${`jump-baseline-${id}`} data-baseline=${base} data-noise=${noise}>
      28-day baseline <b class="num">${base.toFixed(1)} cm</b>${noise != null ? html` · noise <span class="num">± ${noise.toFixed(1)} %</span>` : ''}${standing.state === 'kept' ? ` · as of ${hhmm(standing.at)}` : ''}</span>
    ${r != null && html`<span class="rs-rel num" data-testid=${`jump-rel-${id}`} data-pct=${r.toFixed(1)}>today ${r < 0 ? '−' : '+'}${Math.abs(r).toFixed(1)} % vs baseline</span>`}`;
}
