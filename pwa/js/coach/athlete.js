// Fighter charts: one athlete's last six weeks as the hub computed them —
// mass against the planned path, CMJ against baseline, load and its
// acute:chronic ratio, sparring against the cap, wellness against its
// threshold. Each chart has a plain-words title and a text summary.
import { html, useState, useEffect, useAthletes, Link } from '../ui.js';
import { hubGet, useHubCopy } from './api.js';
import { dayTs, cssVar, usePlot, useSchemeChanges } from './charts.js';
import { addDays, isDay, today, longDay, shortDay, query, mass, massNum, fmtN, MASS_CAUTION } from './common.js';
import { TestCharts } from './testcharts.js';

const SPAN_DAYS = 42;

// useSeries loads everything the charts draw — the series, the path on to
// the weigh-in and the plan report — before any chart is shown, so the
// charts appear together and none pushes the others down when it lands.
function useSeries(id, day) {
  const st = useHubCopy(id ? `series.${id}.${day}` : '', async () => {
    const [s, plan] = await Promise.all([
      hubGet(query(`/api/athletes/${encodeURIComponent(id)}/series`, { from: addDays(day, -(SPAN_DAYS - 1)), to: day })),
      hubGet(query(`/api/athletes/${encodeURIComponent(id)}/plan`, { day })).catch(() => ({ none: true })),
    ]);
    let future = null;
    const wi = s.mass && s.mass.weigh_in_day;
    // The planned path runs on to the weigh-in: fetch that stretch for the path alone.
    if (wi && wi > day && wi <= addDays(day, 120)) {
      future = await hubGet(query(`/api/athletes/${encodeURIComponent(id)}/series`, { from: addDays(day, 1), to: wi }));
    }
    return { s, future, plan };
  });
  return { s: null, future: null, plan: null, ...st.data, error: st.error };
}

const last = (xs) => { for (let i = xs.length - 1; i >= 0; i--) if (xs[i] !== null && xs[i] !== undefined) return i; return -1; };

export function AthletePage() {
  const p = new URLSearchParams(location.search);
  const list = useAthletes();
  const [id, setId] = useState(p.get('id') || '');
  const [day, setDay] = useState(isDay(p.get('day')) ? p.get('day') : today());
  useEffect(() => { history.replaceState(null, '', query('/athlete', { id, day: p.get('day') || day !== today() ? day : '' })); }, [id, day]);
  const a = (list || []).find((x) => x.id === id);
  const st = useSeries(id, day);
  // Redraw in the new colours when the device switches light/dark.
  const scheme = useSchemeChanges();
  const units = (st.s && st.s.units) || (a && a.units) || 'kg';
  return html`<section class="coach" data-testid="screen-athlete">
    <h1>${a ? a.name : 'Fighter charts'}</h1>
    <div class="filters no-print">
      <div class="field wide">
        <label for="athlete-pick">Athlete</label>
        <select id="athlete-pick" data-testid="athlete-pick" value=${id} onChange=${(e) => setId(e.target.value)}>
          <option value="">Choose…</option>
          ${(list || []).map((x) => html`<option value=${x.id}>${x.name}</option>`)}
        </select>
      </div>
      <div class="field narrow">
        <label for="athlete-day">Up to</label>
        <input id="athlete-day" type="date" data-testid="athlete-day" value=${day} onChange=${(e) => isDay(e.target.value) && setDay(e.target.value)} />
      </div>
    </div>
    ${id && html`<p class="muted">${shortDay(addDays(day, -(SPAN_DAYS - 1)))} to ${longDay(day)} · masses in ${units}</p>
      <p class="row no-print"><${Link} to=${query('/review', { day, athlete: id })} class="secondary linkbtn" data-testid="athlete-to-review">Flags of the day</${Link}>
      <${Link} to=${query('/plan', { athlete: id })} class="secondary linkbtn" data-testid="athlete-to-plan">Camp plan</${Link}>
      <${Link} to=${query('/camps', { athlete: id, day: day !== today() ? day : '' })} class="secondary linkbtn" data-testid="athlete-to-camps">Camp history</${Link}>
      <${Link} to=${query('/thresholds', { athlete: id })} class="secondary linkbtn" data-testid="athlete-to-thresholds">Flag thresholds</${Link}></p>`}
    ${!id && html`<p class="muted">Choose an athlete to see the charts.</p>`}
    ${st.error && html`<p class="error" data-testid="athlete-error">${st.s ? `Showing the last copy: ${st.error}.` : `No charts: ${st.error}. Charts are drawn from the hub's numbers; they appear once it can be reached.`}</p>`}
    ${id && !st.s && !st.error && html`<p class="muted">Asking the hub for the numbers…</p>`}
    ${st.s && html`<div class="charts" key=${scheme}>
      <${MassChart} s=${st.s} future=${st.future} units=${units} />
      <${JumpChart} s=${st.s} />
      <${LoadChart} s=${st.s} />
      <${RatioChart} s=${st.s} />
      <${SparChart} s=${st.s} />
      <${WellnessChart} s=${st.s} />
      <${PlanChart} rep=${st.plan} />
    </div>`}
    ${id && html`<h2 key=${'t' + scheme}>Tests and prescriptions</h2><${TestCharts} key=${'c' + scheme} id=${id} day=${day} />`}
  </section>`;
}

// Chart is one card: title, the plot, a legend in words, the summary.
function Chart({ testid, title, summary, legend, build, deps }) {
  const [el, info] = usePlot(build, deps);
  return html`<figure class="chart card" data-testid=${testid} data-points=${info.points} data-series=${info.series} data-lines=${info.lines} data-marks=${info.marks} aria-labelledby=${`${testid}-t`}>
    <h2 id=${`${testid}-t`}>${title}</h2>
    <div class="plot" ref=${el} role="img" aria-label=${summary}></div>
    ${info.error && html`<p class="error">The chart could not be drawn (${info.error}); the numbers are below.</p>`}
    <ul class="legend">${legend.map(([label, color, cls]) => html`<li style=${`color:${color}`}><i class=${cls || ''}></i><span style="color:var(--ink)">${label}</span></li>`)}</ul>
    <figcaption class="summary" data-testid=${`${testid}-summary`}>${summary}</figcaption>
  </figure>`;
}

function colors() {
  return { ink: cssVar('--ink', '#222'), accent: cssVar('--accent', '#1f4b4f'), warm: cssVar('--warm', '#b8542a'), watch: cssVar('--watch', '#8a5a00'), muted: cssVar('--muted', '#666'), ok: cssVar('--ok', '#2f6b45') };
}

function MassChart({ s, future, units }) {
  const m = s.mass;
  const c = colors();
  const days = future ? s.days.concat(future.days) : s.days;
  const conv = (xs) => xs.map((v) => massNum(v, units));
  const pad = (xs) => (future ? xs.concat(future.days.map(() => null)) : xs);
  const path = future ? m.path_kg.concat(future.mass.path_kg) : m.path_kg;
  const lim = m.limit_kg;
  const iMass = last(m.morning_kg);
  const iTrend = last(m.trend_kg);
  const iPath = s.days.length - 1;
  const proj = (m.projections || []).map((p) => ({ ...p, i: last(p.weigh_in_kg) }));
  const wiIdx = m.weigh_in_day ? days.indexOf(m.weigh_in_day) : -1;
  const projSeries = proj.map((p) => days.map((d, i) => (i === wiIdx && p.i >= 0 ? massNum(p.weigh_in_kg[p.i], units) : null)));
  const parts = [];
  if (iMass >= 0) parts.push(`Latest morning mass ${mass(m.morning_kg[iMass], units)} on ${shortDay(s.days[iMass])}`);
  else parts.push('No morning mass in these six weeks');
  if (iTrend >= 0) parts.push(`trend ${mass(m.trend_kg[iTrend], units)}`);
  if (m.path_kg[iPath] != null) parts.push(`planned path ${mass(m.path_kg[iPath], units)} for ${shortDay(s.days[iPath])}`);
  parts.push(lim ? `limit ${mass(lim, units)}` : 'no upper limit');
  if (m.weigh_in_day) parts.push(`weigh-in ${longDay(m.weigh_in_day)}`);
  const pw = proj.filter((p) => p.i >= 0).map((p) => `${mass(p.weigh_in_kg[p.i], units)} ${p.method === 'rate' ? `at a steady ${fmtN(p.rate_pct_week, 1)} %/week` : "at the last 14 days' rate"}`);
  const iLoss = last(m.loss_pct_week);
  let summary = parts.join('; ') + '.';
  if (pw.length) summary += ` Projected weigh-in mass: ${pw.join(', or ')}.`;
  if (iLoss >= 0) summary += m.loss_pct_week[iLoss] >= 0 ? ` Losing ${fmtN(m.loss_pct_week[iLoss], 2)} % of body mass a week over the last 14 days.` : ` Gaining ${fmtN(-m.loss_pct_week[iLoss], 2)} % of body mass a week over the last 14 days.`;
  const legend = [['morning mass', c.accent, 'dot'], ['trend', c.ink], ['planned path', c.accent, 'dash'], [lim ? 'limit' : 'no limit', c.warm]];
  if (pw.length) legend.push(['projected weigh-in mass (filled: at a steady rate; hollow: at the recent rate)', c.watch, 'dot']);
  return html`<div class="chart-wrap">
    <${Chart} testid="chart-mass" title=${`Morning mass against the plan (${units})`} summary=${summary} legend=${legend}
      deps=${[s, future, units]} build=${() => ({
        x: days.map(dayTs),
        ys: [conv(pad(m.morning_kg)), conv(pad(m.trend_kg)), conv(path), days.map(() => (lim ? massNum(lim, units) : null)), ...projSeries],
        spec: {
          yLabel: units,
          series: [
            { label: 'morning mass', stroke: c.accent, kind: 'points', size: 7 },
            { label: 'trend', stroke: c.ink, width: 2.5 },
            { label: 'planned path', stroke: c.accent, kind: 'dash', width: 2 },
            { label: 'limit', stroke: c.warm, width: 2 },
            ...proj.map((p) => ({ label: p.label, stroke: c.watch, kind: 'points', size: p.method === 'rate' ? 10 : 7, fill: p.method === 'rate' ? c.watch : 'transparent' })),
          ],
          marks: m.weigh_in_day ? [{ x: dayTs(m.weigh_in_day), label: 'weigh-in', color: c.warm }] : [],
          // Every marker named: the limit line, and each projected
          // weigh-in mass with the assumption behind it.
          labels: [
            ...(lim ? [{ x: dayTs(days[0]), y: massNum(lim, units), text: `limit ${mass(lim, units)}`, color: c.warm, below: true }] : []),
            ...proj.filter((p) => p.i >= 0 && wiIdx >= 0).map((p, k) => ({
              x: dayTs(m.weigh_in_day), y: massNum(p.weigh_in_kg[p.i], units), color: c.watch, below: k % 2 === 1,
              text: `projected ${mass(p.weigh_in_kg[p.i], units)} ${p.method === 'rate' ? `at ${fmtN(p.rate_pct_week, 1)} %/week` : 'at the recent rate'}`,
            })),
          ],
        },
      })} />
    <p class="caution" data-testid="chart-mass-caution">${MASS_CAUTION}</p>
  </div>`;
}

function JumpChart({ s }) {
  const j = s.jump;
  const c = colors();
  const i = last(j.mean_cm);
  const b = j.baseline_cm.length - 1;
  const forming = (j.baseline_test_days[b] || 0) < j.min_test_days;
  let summary;
  if (i < 0) summary = 'No CMJ test in these six weeks.';
  else {
    summary = `Latest test ${shortDay(s.days[i])}: mean ${fmtN(j.mean_cm[i])} cm of the attempts (best ${fmtN(j.best_cm[i])} cm).`;
    if (j.baseline_cm[i] != null) summary += ` Baseline that day ${fmtN(j.baseline_cm[i])} cm; usual day-to-day noise ${fmtN(j.noise_pct[i])} % (band ${fmtN(j.band_low_cm[i])}–${fmtN(j.band_high_cm[i])} cm).`;
  }
  if (forming) summary += ` Baseline forming: ${j.baseline_test_days[b] || 0} of the ${j.min_test_days} test days it needs — not enough data yet to judge a drop.`;
  return html`<${Chart} testid="chart-jump" title="Countermovement jump against the fighter's own baseline (cm)" summary=${summary}
    legend=${[['mean of attempts', c.accent, 'dot'], ['best attempt', c.muted, 'dot'], ['baseline', c.ink], ['usual noise band', c.accent, 'band']]}
    deps=${[s]} build=${() => ({
      x: s.days.map(dayTs),
      ys: [j.band_low_cm, j.band_high_cm, j.baseline_cm, j.best_cm, j.mean_cm],
      spec: {
        yLabel: 'cm',
        series: [
          { label: 'band low', stroke: 'transparent', width: 0 },
          { label: 'band high', stroke: 'transparent', width: 0 },
          { label: 'baseline', stroke: c.ink, width: 2 },
          { label: 'best', stroke: c.muted, kind: 'points', size: 6 },
          { label: 'mean', stroke: c.accent, kind: 'linepoints', size: 8 },
        ],
        bands: [{ series: [2, 1], fill: hexA(c.accent, 0.18) }],
      },
    })} />`;
}

function LoadChart({ s }) {
  const l = s.load;
  const c = colors();
  const i = last(l.daily_au);
  let summary = i < 0 ? 'No sessions on record.' : `Load ${shortDay(s.days[i])}: ${fmtN(l.daily_au[i], 0)} AU (session RPE × minutes).`;
  if (i >= 0 && l.acute_au[i] != null) summary += ` Acute ${fmtN(l.acute_au[i], 0)} AU a day (7-day weighted), chronic ${fmtN(l.chronic_au[i], 0)} AU a day (28-day weighted).`;
  if (i >= 0 && l.week_level[i]) summary += ` Planned this week: ${(LEVEL_WORDS[l.week_level[i]] || l.week_level[i]).toLowerCase()}${l.planned_week_au[i] != null ? `, ${fmtN(l.planned_week_au[i], 0)} AU` : ''}.`;
  return html`<${Chart} testid="chart-load" title="Daily session load (AU)" summary=${summary}
    legend=${[['load that day', c.accent, 'bar'], ['acute: 7-day weighted mean', c.warm], ['chronic: 28-day weighted mean', c.ink, 'dash']]}
    deps=${[s]} build=${() => ({
      x: s.days.map(dayTs),
      ys: [l.daily_au, l.acute_au, l.chronic_au],
      spec: {
        yLabel: 'AU',
        scales: { y: { range: (u, lo, hi) => [0, Math.max(100, hi || 0) * 1.08] } },
        series: [
          { label: 'daily load', stroke: c.accent, kind: 'bars', fill: hexA(c.accent, 0.55) },
          { label: 'acute', stroke: c.warm, width: 2.5 },
          { label: 'chronic', stroke: c.ink, kind: 'dash', width: 2 },
        ],
      },
    })} />`;
}

// RatioChart: the acute:chronic ratio in a panel of its own, on its own
// scale (a ratio, not a load), with the watch and low lines named.
function RatioChart({ s }) {
  const l = s.load;
  const c = colors();
  const r = last(l.ratio);
  let summary = r >= 0 ? `Acute:chronic ratio ${shortDay(s.days[r])}: ${fmtN(l.ratio[r], 2)} (watch above ${fmtN(l.watch_ratio, 2)}, low under ${fmtN(l.low_ratio, 2)} outside the taper).`
    : `Ratio not shown yet: it needs ${l.ratio_min_days} days on record (not enough data yet).`;
  summary += ` ${l.caution}`;
  const x0 = dayTs(s.days[0]);
  return html`<${Chart} testid="chart-ratio" title="Acute:chronic load ratio (no unit; 1.0 = load as usual)" summary=${summary}
    legend=${[['ratio', c.ink], [`watch above ${fmtN(l.watch_ratio, 1)}`, c.warm, 'dash'], [`low under ${fmtN(l.low_ratio, 1)}`, c.muted, 'dash']]}
    deps=${[s]} build=${() => ({
      x: s.days.map(dayTs),
      ys: [l.ratio, s.days.map(() => l.watch_ratio), s.days.map(() => l.low_ratio)],
      spec: {
        yLabel: 'ratio',
        height: 190,
        scales: { y: { range: (u, lo, hi) => [0, Math.max(2, (hi || 0) * 1.1)] } },
        series: [
          { label: 'ratio', stroke: c.ink, width: 2.5 },
          { label: 'watch', stroke: c.warm, kind: 'dash', width: 1.5 },
          { label: 'low', stroke: c.muted, kind: 'dash', width: 1.5 },
        ],
        labels: [
          { x: x0, y: l.watch_ratio, text: `watch ${fmtN(l.watch_ratio, 1)}`, color: c.warm },
          { x: x0, y: l.low_ratio, text: `low ${fmtN(l.low_ratio, 1)}`, color: c.muted, below: true },
        ],
      },
    })} />`;
}

function SparChart({ s }) {
  const sp = s.sparring;
  const c = colors();
  const n = s.days.length - 1;
  const hardCaps = sp.hard_caps && sp.hard_caps.length ? sp.hard_caps : s.days.map(() => sp.hard_cap_rounds);
  const x0 = dayTs(s.days[0]);
  let summary = `7 days to ${shortDay(s.days[n])}: ${sp.rolling_rounds[n]} sparring rounds against a cap of ${sp.cap_rounds[n]}; ${sp.rolling_hard_rounds[n]} hard rounds against a hard-round cap of ${hardCaps[n]}.`;
  summary += ` That day ${sp.rounds[n]} ${sp.rounds[n] === 1 ? 'round' : 'rounds'} (${sp.hard_rounds[n]} hard).`;
  return html`<${Chart} testid="chart-spar" title="Sparring rounds: 7-day totals against the caps, all rounds and hard rounds" summary=${summary}
    legend=${[['rounds that day', c.accent, 'bar'], ['hard rounds that day', c.warm, 'bar'], ['7-day total', c.ink], ['weekly cap', c.ink, 'dash'], ['7-day hard rounds', c.warm], ['hard-round cap', c.warm, 'dash']]}
    deps=${[s]} build=${() => ({
      x: s.days.map(dayTs),
      ys: [sp.rounds, sp.hard_rounds, sp.rolling_rounds, sp.cap_rounds, sp.rolling_hard_rounds, hardCaps],
      spec: {
        yLabel: 'rounds',
        height: 260,
        scales: { y: { range: (u, lo, hi) => [0, Math.max(10, hi || 0) * 1.15] } },
        series: [
          { label: 'rounds', stroke: c.accent, kind: 'bars', fill: hexA(c.accent, 0.5) },
          { label: 'hard rounds', stroke: c.warm, kind: 'bars', fill: hexA(c.warm, 0.7) },
          { label: '7-day total', stroke: c.ink, width: 2.5 },
          { label: 'weekly cap', stroke: c.ink, kind: 'dash', width: 2 },
          { label: '7-day hard rounds', stroke: c.warm, width: 2.5 },
          { label: 'hard-round cap', stroke: c.warm, kind: 'dash', width: 2 },
        ],
        labels: [
          { x: x0, y: sp.cap_rounds[0], text: `weekly cap ${sp.cap_rounds[0]}`, color: c.ink },
          { x: x0, y: hardCaps[0], text: `hard-round cap ${hardCaps[0]}`, color: c.warm, below: true },
        ],
      },
    })} />`;
}

function WellnessChart({ s }) {
  const w = s.wellness;
  const c = colors();
  const i = last(w.total);
  const n = s.days.length - 1;
  let summary = i < 0 ? 'No complete wellness check-in in these six weeks.' : `Wellness ${shortDay(s.days[i])}: ${fmtN(w.total[i], 0)} of 25 (five items, 5 = best each).`;
  if (i >= 0 && w.baseline_mean[i] != null) summary += ` Usual ${fmtN(w.baseline_mean[i])}; watch at or below ${fmtN(w.watch_threshold[i])}, alert at or below ${fmtN(w.alert_threshold[i])}.`;
  if ((w.baseline_checkins[n] || 0) < w.min_checkins) summary += ` Baseline forming: ${w.baseline_checkins[n] || 0} of the ${w.min_checkins} check-ins it needs — not enough data yet.`;
  return html`<${Chart} testid="chart-wellness" title="Wellness total against the fighter's usual (5–25)" summary=${summary}
    legend=${[['wellness total', c.accent, 'dot'], ['usual (28-day mean)', c.ink], ['watch threshold', c.watch, 'dash'], ['alert threshold', c.warm, 'dash']]}
    deps=${[s]} build=${() => ({
      x: s.days.map(dayTs),
      ys: [w.total, w.baseline_mean, w.watch_threshold, w.alert_threshold],
      spec: {
        yLabel: 'points',
        scales: { y: { range: [5, 25] } },
        series: [
          { label: 'total', stroke: c.accent, kind: 'linepoints', size: 7 },
          { label: 'usual', stroke: c.ink, width: 2 },
          { label: 'watch', stroke: c.watch, kind: 'dash', width: 2 },
          { label: 'alert', stroke: c.warm, kind: 'dash', width: 2 },
        ],
      },
    })} />`;
}

// hexA turns #rrggbb into rgba with alpha, for fills.
function hexA(hex, a) {
  const m = /^#([0-9a-f]{6})$/i.exec(hex.trim());
  if (!m) return hex;
  const n = parseInt(m[1], 16);
  return `rgba(${(n >> 16) & 255},${(n >> 8) & 255},${n & 255},${a})`;
}

const LEVEL_WORDS = { rest: 'Rest', low: 'Low', medium: 'Medium', medium_heavy: 'Medium–heavy', heavy: 'Heavy', taper: 'Taper' };

// PlanChart is the camp plan against what was done, week by week: planned
// and done session load, planned and done sparring rounds, from the hub's
// plan report up to the chart's day (loaded with the series).
function PlanChart({ rep }) {
  if (!rep || rep.none || !rep.weeks || !rep.weeks.length) return null;
  const c = colors();
  const ws = rep.weeks;
  const cur = ws.find((w) => w.current) || [...ws].reverse().find((w) => w.done.days > 0);
  let summary = cur ? `Week ${cur.week}${cur.current ? ' (this week)' : ''}, ${(LEVEL_WORDS[cur.level] || cur.level).toLowerCase()}: ${fmtN(cur.done.load_au, 0)} AU done of ${cur.planned_load_au != null ? fmtN(cur.planned_load_au, 0) + ' AU' : 'no load'} planned; ${cur.done.rounds} sparring rounds of ${cur.spar_rounds ?? '—'} planned (${cur.done.hard_rounds} hard${cur.hard_rounds != null ? ` of ${cur.hard_rounds}` : ''}).` : 'The camp has not started.';
  if (cur && cur.words) summary += ` ${cur.words}`;
  const hot = ws.filter((w) => w.verdict === 'hot').length;
  const cold = ws.filter((w) => w.verdict === 'cold').length;
  if (hot || cold) summary += ` Over the camp so far: ${hot} week${hot === 1 ? '' : 's'} ran hot, ${cold} cold.`;
  const done = (f) => ws.map((w) => (w.done.days ? f(w) : null));
  return html`<${Chart} testid="chart-plan" title="The camp plan against what was done, week by week" summary=${summary}
    legend=${[['load done (AU)', c.accent, 'bar'], ['load planned (AU)', c.ink, 'dash'], ['sparring rounds done', c.warm], ['sparring rounds planned', c.warm, 'dash']]}
    deps=${[rep]} build=${() => ({
      x: ws.map((w) => dayTs(w.start)),
      ys: [done((w) => w.done.load_au), ws.map((w) => w.planned_load_au), done((w) => w.done.rounds), ws.map((w) => w.spar_rounds)],
      spec: {
        yLabel: 'AU a week',
        scales: { rounds: { range: (u, lo, hi) => [0, Math.max(10, hi || 0) * 1.1] }, y: { range: (u, lo, hi) => [0, Math.max(100, hi || 0) * 1.1] } },
        y2: { scale: 'rounds', label: 'rounds a week' },
        series: [
          { label: 'load done', stroke: c.accent, kind: 'bars', fill: hexA(c.accent, 0.55) },
          { label: 'load planned', stroke: c.ink, kind: 'dash', width: 2 },
          { label: 'rounds done', stroke: c.warm, kind: 'linepoints', width: 2, scale: 'rounds' },
          { label: 'rounds planned', stroke: c.warm, kind: 'dash', width: 1.5, scale: 'rounds' },
        ],
      },
    })} />`;
}
