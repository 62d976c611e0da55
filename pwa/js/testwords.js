// Tests and prescriptions in words with units, from what the hub derived
// and stored in the record (V_IFT, decrement, 1RM estimates, RSI, targets):
// one line per record for the day's list, the flag inputs and the
// intervals screen. Nothing is computed here but rounding for display.
const r0 = (x) => String(Math.round(x));
const r1 = (x) => (Math.round(x * 10) / 10).toString();
const r2 = (x) => x.toFixed(2);

// testLine: a test record in one line, or '' when the record is no test.
export function testLine(r) {
  const b = r.body || {};
  if (r.kind === 'fitness_test') {
    if (b.protocol === 'ift_30_15') return `30-15 IFT: stage ${b.stage}${b.vift_kmh ? ` — V_IFT ${r1(b.vift_kmh)} km/h` : ''}${b.hr_peak ? `, peak ${b.hr_peak} bpm` : ''}`;
    if (b.protocol === 'repeated_sprint') {
      const t = (b.sprint_s || []).map((x) => `${x}`).join(', ');
      return `Repeated sprints${b.distance_m ? ` × ${b.distance_m} m` : ''}: ${t} s${b.sdec_pct != null ? ` — decrement ${r2(b.sdec_pct)} %, fatigue ${r2(b.fatigue_pct)} %` : ''}`;
    }
    if (b.protocol === 'hr_max') return `Maximal heart rate ${b.hr_max_bpm} bpm (measured)`;
  }
  if (r.kind === 'strength') {
    const sets = (b.sets || []).map((s) => `${s.load_kg} kg × ${s.reps}${s.rir != null ? ` (${s.rir} in reserve)` : ''}${s.mpv_ms != null ? ` at ${s.mpv_ms} m/s` : ''}`).join('; ');
    const est = [];
    if (b.e1rm_epley_kg) est.push(`e1RM ${r1(b.e1rm_epley_kg)} kg (Epley), ${r1(b.e1rm_brzycki_kg)} kg (Brzycki)`);
    if (b.lv_1rm_kg) est.push(`1RM ${r1(b.lv_1rm_kg)} kg at ${b.min_velocity_ms} m/s (load–velocity)`);
    return `${b.exercise}: ${sets}${est.length ? ` — ${est.join('; ')}` : ''}`;
  }
  if (r.kind === 'jump' && b.test === 'dj') {
    const at = (b.flight_ms || b.heights_cm || []).map((x, i) => `${x} ${b.flight_ms ? 'ms' : 'cm'} / ${(b.contact_ms || [])[i]} ms`).join(', ');
    return `Drop jump from ${b.drop_cm} cm: ${at}${b.rsi ? ` — best RSI ${r2(b.rsi)}` : ''}`;
  }
  return '';
}

// targetWords: an interval session's targets as prescribed.
export function targetWords(b) {
  const parts = [];
  if (b.target_rep_m) parts.push(`${r1(b.target_rep_m)} m per rep (${b.pct_vift} % of ${r1(b.vift_kmh)} km/h)`);
  if (b.target_hr_lo) parts.push(`${r0(b.target_hr_lo)}–${r0(b.target_hr_hi)} bpm (${b.hr_lo_pct}–${b.hr_hi_pct} % of ${r0(b.hr_max_bpm)} bpm${b.hr_max_from === 'age' ? ', age-predicted' : ', measured'})`);
  return parts.join(' · ');
}

// doneWords: what was done against what was prescribed.
export function doneWords(b) {
  if (b.done_reps == null && b.done_rep_m == null && b.hr_peak == null) return '';
  const total = (b.reps || 0) * (b.sets || 1);
  const parts = [];
  if (b.done_reps != null) parts.push(`${b.done_reps} of ${total} reps`);
  if (b.done_rep_m != null) parts.push(b.target_rep_m ? `${r1(b.done_rep_m)} of ${r1(b.target_rep_m)} m per rep (${r0(b.done_rep_m / b.target_rep_m * 100)} %)` : `${r1(b.done_rep_m)} m per rep`);
  if (b.hr_peak != null) {
    let w = `peak ${b.hr_peak} bpm`;
    if (b.target_hr_lo) w += b.hr_peak < b.target_hr_lo ? ' — below the band' : b.hr_peak > b.target_hr_hi ? ' — above the band' : ' — in the band';
    parts.push(w);
  }
  if (b.rpe != null) parts.push(`RPE ${b.rpe}`);
  return parts.join(' · ');
}
