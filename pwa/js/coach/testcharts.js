// Fighter charts, tests part: each test's history across camps (V_IFT,
// sprint decrement, 1RM estimates, drop-jump RSI) and the interval sessions
// prescribed from them, done against prescribed — as the hub computed them.
import { html } from '../ui.js';
import { hubGet, useHubCopy } from './api.js';
import { dayTs, cssVar, usePlot } from './charts.js';
import { query, shortDay } from './common.js';
import { changeWords } from './tests.js';

function useTestsReport(id, day) {
  const st = useHubCopy(id ? `tests.${id}.${day}` : '', () => hubGet(query(`/api/athletes/${encodeURIComponent(id)}/tests`, { day })));
  return { rep: st.data, error: st.error };
}

function Plot({ testid, title, summary, x, ys, spec }) {
  const [el, info] = usePlot(() => ({ x, ys, spec }), [JSON.stringify([x, ys])]);
  const pts = info.points;
  return html`<figure class="chart card test-chart" data-testid=${testid} data-points=${pts} aria-labelledby=${`${testid}-t`}>
    <h2 id=${`${testid}-t`}>${title}</h2>
    <div class="plot" ref=${el} role="img" aria-label=${summary}></div>
    <figcaption class="summary" data-testid=${`${testid}-summary`}>${summary}</figcaption>
  </figure>`;
}

export function TestCharts({ id, day }) {
  const st = useTestsReport(id, day);
  if (!id) return null;
  if (!st.rep) return st.error ? html`<p class="muted" data-testid="test-charts-offline">Test charts come from the hub: ${st.error}.</p>` : null;
  const accent = cssVar('--accent', '#1f4b4f');
  const warm = cssVar('--warm', '#b8542a');
  const groups = {};
  for (const e of st.rep.tests) (groups[e.series] = groups[e.series] || []).push(e);
  const order = ['ift_30_15', 'repeated_sprint', 'hr_max', 'strength', 'dj'];
  const series = Object.values(groups).sort((a, b) => order.indexOf(a[0].test) - order.indexOf(b[0].test));
  // One time axis for every test chart: the report's whole span.
  const lo = Math.min(...st.rep.tests.map((e) => dayTs(e.day)), ...(st.rep.sessions || []).map((e) => dayTs(e.day)), dayTs(day) - 41 * 86400);
  const xScale = { x: { time: true, range: [lo - 86400, dayTs(day) + 86400] } };
  const sessions = st.rep.sessions || [];
  const done = sessions.filter((s) => s.done_pct != null || s.reps_pct != null);
  return html`<div class="charts" data-testid="test-charts">
    ${series.map((g) => {
      const last = g[g.length - 1];
      const unit = last.unit;
      const summary = `${last.label}: ${last.summary} on ${shortDay(last.day)}; ${changeWords(last)}.${last.better === 'down' ? ' Lower is better.' : ''}`;
      if (g.length < 2) {
        return html`<figure class="chart card test-chart" data-testid=${`test-chart-${last.series}`} data-points="1"><h2>${last.label} (${unit})</h2>
          <figcaption class="summary">${summary} A trend appears from the second test.</figcaption></figure>`;
      }
      return html`<${Plot} testid=${`test-chart-${last.series}`} title=${`${last.label} (${unit})`} summary=${summary}
        x=${g.map((e) => dayTs(e.day))} ys=${[g.map((e) => e.value)]}
        spec=${{ series: [{ label: last.label, stroke: accent, kind: 'linepoints' }], yLabel: unit, height: 180, scales: xScale }} />`;
    })}
    ${sessions.length > 0 && html`<${Plot} testid="test-chart-sessions" title="Intervals: done against prescribed (%)"
      summary=${done.length ? `Last session done on ${shortDay(done[done.length - 1].day)}: ${done[done.length - 1].reps_pct ?? '–'} % of the reps, ${done[done.length - 1].done_pct ?? '–'} % of the distance per rep prescribed. ${sessions.length - done.length} prescribed, not logged yet.` : `${sessions.length} prescribed, none logged as done yet.`}
      x=${sessions.map((s) => dayTs(s.day))} ys=${[sessions.map((s) => s.done_pct ?? null), sessions.map((s) => s.reps_pct ?? null), sessions.map(() => 100)]}
      spec=${{ series: [{ label: 'distance per rep, % of target', stroke: accent, kind: 'points' }, { label: 'reps done, % of planned', stroke: warm, kind: 'points', size: 6 }, { label: 'prescribed', stroke: cssVar('--muted', '#666'), kind: 'dash', width: 1 }], yLabel: '%', height: 200, scales: { ...xScale, y: { range: [50, 110] } } }} />`}
  </div>`;
}
