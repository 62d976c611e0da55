// Camp history: one fighter's camps side by side, each day placed by its
// days to that camp's bout, so "30 days out" lines up in every camp —
// morning mass against the limit and the planned path, CMJ, weekly load,
// sparring a week, and the tests of each camp. Every number is the hub's.
import { html, useState, useEffect, useAthletes, Link } from '../ui.js';
import { getMeta } from '../db.js';
import { hubGet, useHubCopy } from './api.js';
import { daysOut, cssVar, usePlot, useSchemeChanges } from './charts.js';
import { longDay, isDay, query, mass, massNum, fmtN, monthYear, MASS_CAUTION } from './common.js';

// Each camp's line: this camp in the accent colour and thickest; earlier
// camps told apart by colour and by dash, so the lines read in grey too.
function styles(camps) {
  const accent = cssVar('--accent', '#1f4b4f');
  const others = [[cssVar('--warm', '#b8542a'), [10, 5]], [cssVar('--watch', '#8a5a00'), [3, 4]], [cssVar('--muted', '#666'), [12, 4, 3, 4]]];
  let k = 0;
  return camps.map((c) => {
    if (c.current) return { color: accent, dash: null, width: 3, legend: '' };
    const [color, dash] = others[k++ % others.length];
    return { color, dash, width: 2, legend: 'dash' };
  });
}

// A camp's names: "this camp" or "Jun 2026 camp" on a chart, "This
// camp" or "Jun 2026 camp" in a heading, and "The Jun 2026 camp" to begin
// a sentence.
const short = (c) => (c.current ? 'this camp' : `${monthYear(c.bout_day)} camp`);
const heading = (c) => (c.current ? 'This camp' : `${monthYear(c.bout_day)} camp`);
const subject = (c) => (c.current ? 'This camp' : `The ${heading(c)}`);

// at is the index of a camp's value at days-out n in xs, or of the nearest
// one within 3 days (a missed check-in); -1 if none.
function at(c, xs, n) {
  let best = -1;
  for (let i = 0; i < c.days_out.length; i++) {
    if (xs[i] === null || xs[i] === undefined) continue;
    if (Math.abs(c.days_out[i] - n) <= 3 && (best < 0 || Math.abs(c.days_out[i] - n) < Math.abs(c.days_out[best] - n))) best = i;
  }
  return best;
}

export function Camps() {
  const p = new URLSearchParams(location.search);
  const list = useAthletes();
  const [role, setRole] = useState(null);
  useEffect(() => { getMeta('role').then((r) => setRole(r || 'coach')); }, []);
  const [id, setId] = useState(p.get('athlete') || '');
  const day = isDay(p.get('day')) ? p.get('day') : '';
  useEffect(() => { history.replaceState(null, '', query('/camps', { athlete: id, day })); }, [id]);
  const st = useHubCopy(id ? `camps.${id}.${day}` : '', () => hubGet(query(`/api/athletes/${encodeURIComponent(id)}/camps`, { day })));
  const scheme = useSchemeChanges();
  if (list === null || role === null) {
    return html`<section class="coach" data-testid="screen-camps" data-ready="false"><h1>Camp history</h1><p class="muted">Loading…</p></section>`;
  }
  const a = list.find((x) => x.id === id);
  const h = st.data;
  const ready = !id || !!h || !!st.error;
  return html`<section class="coach" data-testid="screen-camps" data-ready=${ready ? 'true' : 'false'}>
    <h1>Camp history${a ? html` — ${a.name}` : ''}</h1>
    ${role !== 'athlete' && html`<div class="filters no-print">
      <div class="field wide">
        <label for="camps-athlete">Athlete</label>
        <select id="camps-athlete" data-testid="camps-athlete" value=${id} onChange=${(e) => setId(e.target.value)}>
          <option value="">Choose…</option>
          ${list.map((x) => html`<option value=${x.id}>${x.name}</option>`)}
        </select>
      </div>
    </div>`}
    ${!id && html`<p class="muted">Choose an athlete to see their camps side by side.</p>`}
    ${id && !h && !st.error && html`<p class="muted" data-testid="camps-loading">Asking the hub for the numbers…</p>`}
    ${st.error && html`<p class="error" data-testid="camps-error">${h ? `Showing the last copy: ${st.error}.` : `No camp history: ${st.error}. It is drawn from the hub's numbers and appears once the hub can be reached.`}</p>`}
    ${h && html`<${History} h=${h} key=${scheme} />`}
  </section>`;
}

function History({ h }) {
  const camps = h.camps;
  const sty = styles(camps);
  const units = h.units;
  const cur = camps.find((c) => c.current) || camps[0];
  if (!camps.length) return html`<p data-testid="camps-none">No camp on record for ${h.name}: a camp appears here once a bout is planned.</p>`;
  const now = cur ? cur.days_out[cur.days_out.length - 1] : 0;
  return html`
    <p class="muted">Each camp is drawn by days to its own bout, so the same point of every camp lines up: ${cur.current && now < 0 ? `today is ${-now} days out from this camp's bout` : 'the bout is at 0'}. Masses in ${units}.</p>
    <p class="row no-print"><${Link} to=${query('/athlete', { id: h.athlete })} class="secondary linkbtn" data-testid="camps-to-athlete">Fighter charts</${Link}>
      <${Link} to=${query('/plan', { athlete: h.athlete })} class="secondary linkbtn" data-testid="camps-to-plan">Camp plan</${Link}></p>
    <ul class="camp-list" data-testid="camps-list">${camps.map((c, i) => html`
      <li class="card" data-testid="camp" data-bout=${c.bout} data-current=${c.current ? 'true' : 'false'}>
        <i class=${`swatch ${sty[i].legend}`} style=${`color:${sty[i].color}`} aria-hidden="true"></i>
        <div><strong>${heading(c)}</strong>${c.name ? ` — ${c.name}` : ''}<br />
          <span class="muted">Bout ${longDay(c.bout_day)} · ${c.current && c.days[c.days.length - 1] < c.bout_day ? `${c.days.length} days so far` : `${c.days.length} days`} from ${longDay(c.camp_start)} · ${c.limit_kg ? `limit ${mass(c.limit_kg, units)}` : 'no upper limit'}</span></div>
      </li>`)}</ul>
    ${camps.length === 1 && html`<p class="muted" data-testid="camps-one">Only this camp is on record; earlier camps appear beside it once their bouts are in Cornerbook.</p>`}
    <div class="charts">
      <${MassChart} camps=${camps} sty=${sty} units=${units} now=${now} />
      <${CMJChart} camps=${camps} sty=${sty} now=${now} />
      <${WeekChart} testid="camps-load" title="Weekly load (AU)" unit="AU" camps=${camps} sty=${sty} now=${now}
        value=${(w) => w.load_au} words=${(w) => `${fmtN(w.load_au, 0)} AU`} />
      <${WeekChart} testid="camps-spar" title="Sparring rounds a week" unit="rounds" camps=${camps} sty=${sty} now=${now}
        value=${(w) => w.spar_rounds} words=${(w) => `${w.spar_rounds} rounds, ${w.hard_rounds} hard`} />
    </div>
    <${TestsTable} h=${h} />`;
}

// CampChart is one card: title, plot, legend in words and a summary.
function CampChart({ testid, title, summary, x, ys, spec, legend, caution }) {
  const [el, info] = usePlot(() => ({ x, ys, spec }), [JSON.stringify([x, ys])]);
  return html`<figure class="chart card" data-testid=${testid} data-points=${info.points} data-lines=${info.lines} aria-labelledby=${`${testid}-t`}>
    <h2 id=${`${testid}-t`}>${title}</h2>
    <div class="plot" ref=${el} role="img" aria-label=${summary}></div>
    ${info.error && html`<p class="error">The chart could not be drawn (${info.error}); the numbers are in the summary.</p>`}
    <ul class="legend">${legend.map(([label, color, cls]) => html`<li style=${`color:${color}`}><i class=${cls || ''}></i><span style="color:var(--ink)">${label}</span></li>`)}</ul>
    <figcaption class="summary" data-testid=${`${testid}-summary`}>${summary}</figcaption>
    ${caution && html`<p class="caution">${caution}</p>`}
  </figure>`;
}

// spread puts lines of the camps on one x axis of days out, the union of
// theirs: each line is [days_out, values], null where it has no day.
function spread(lines) {
  const x = [...new Set(lines.flatMap(([days]) => days))].sort((a, b) => a - b);
  return {
    x,
    ys: lines.map(([days, vals]) => { const m = new Map(days.map((d, i) => [d, vals[i]])); return x.map((d) => (m.has(d) ? m.get(d) : null)); }),
  };
}

// compareWords says each camp's value at days-out now (or within 3 days
// of it) in words: fmt(c, i) for the value at index i of xs(c).
function compareWords(camps, now, xs, fmt, what) {
  return camps.map((c) => {
    const i = at(c, xs(c), now);
    return i < 0 ? `${subject(c)}: no ${what} near ${-now} days out` : `${subject(c)}: ${fmt(c, i)} at ${-c.days_out[i]} days out`;
  }).join('. ') + '.';
}

function MassChart({ camps, sty, units, now }) {
  const limits = camps.every((c) => c.limit_kg);
  const ink = cssVar('--ink', '#222');
  // With a limit in every camp, against the limit (camps at different
  // limits share one scale); otherwise in the athlete's units.
  const inUnits = (xs) => xs.map((v) => massNum(v, units));
  const val = limits ? (c) => c.over_limit_pct : (c) => inUnits(c.morning_kg);
  const path = limits ? (c) => c.path.over_limit_pct : (c) => inUnits(c.path.kg);
  // One x axis for the days drawn and the paths on to each bout: the
  // camps' mass lines, then their paths.
  const { x, ys: all } = spread([...camps.map((c) => [c.days_out, val(c)]), ...camps.map((c) => [c.path.days_out, path(c)])]);
  const ys = all.slice(0, camps.length);
  const paths = all.slice(camps.length);
  const summary = compareWords(camps, now, (c) => c.morning_kg,
    (c, i) => (c.limit_kg ? `${mass(c.morning_kg[i], units)}, ${fmtN(c.over_limit_pct[i], 1)} % over the limit of ${mass(c.limit_kg, units)}` : mass(c.morning_kg[i], units)), 'morning mass');
  const series = [];
  const data = [];
  camps.forEach((c, i) => {
    series.push({ label: `${short(c)}: morning mass`, stroke: sty[i].color, width: sty[i].width, dash: sty[i].dash, kind: 'linepoints', size: 4 });
    data.push(ys[i]);
    series.push({ label: `${short(c)}: planned path`, stroke: sty[i].color, width: 1, dash: [2, 3] });
    data.push(paths[i]);
  });
  if (limits) { series.push({ label: 'the limit', stroke: ink, width: 1 }); data.push(x.map(() => 0)); }
  const legend = [...camps.map((c, i) => [`${short(c)}: morning mass (dotted: its planned path)`, sty[i].color, sty[i].legend]), ...(limits ? [['the limit (0 %)', ink]] : [])];
  return html`<${CampChart} testid="camps-mass" title=${limits ? 'Morning mass above the limit (%)' : `Morning mass (${units})`} summary=${summary}
    x=${x} ys=${data} legend=${legend} caution=${MASS_CAUTION}
    spec=${{ xDays: true, yLabel: limits ? '% over' : units, series, height: 240 }} />`;
}

function CMJChart({ camps, sty, now }) {
  const { x, ys } = spread(camps.map((c) => [c.days_out, c.cmj_cm]));
  const summary = camps.map((c) => {
    const w = c.weeks.filter((x) => x.mean_cmj_cm != null);
    const nowWeek = Math.floor(-now / 7);
    const same = w.find((x) => x.weeks_out === nowWeek);
    if (!w.length) return `${subject(c)}: no CMJ test.`;
    const shown = same || w[w.length - 1];
    return `${subject(c)}: ${fmtN(shown.mean_cmj_cm, 1)} cm on average ${shown.weeks_out} weeks out.`;
  }).join(' ');
  return html`<${CampChart} testid="camps-cmj" title="Jump height, CMJ (cm)" summary=${summary} x=${x} ys=${ys}
    legend=${camps.map((c, i) => [`${short(c)}: the day's CMJ`, sty[i].color, sty[i].legend])}
    spec=${{ xDays: true, yLabel: 'cm', series: camps.map((c, i) => ({ label: `${short(c)}: CMJ`, stroke: sty[i].color, width: sty[i].width, dash: sty[i].dash, kind: 'linepoints', size: 5 })), height: 220 }} />`;
}

// WeekChart draws one weekly number per camp, each week at its middle day
// (3 days before its last), so weeks line up with the daily charts.
function WeekChart({ testid, title, unit, camps, sty, now, value, words }) {
  const { x, ys } = spread(camps.map((c) => [c.weeks.map((w) => -7 * w.weeks_out - 3), c.weeks.map(value)]));
  const nowWeek = Math.floor(-now / 7);
  const summary = camps.map((c) => {
    const w = c.weeks.find((x) => x.weeks_out === nowWeek);
    if (!w) return `${subject(c)}: nothing ${nowWeek} weeks out.`;
    return `${subject(c)}, ${nowWeek === 0 ? 'the week of the bout' : `${nowWeek} weeks out`}: ${words(w)}${w.days < 7 ? ` (${w.days} of its 7 days)` : ''}.`;
  }).join(' ');
  return html`<${CampChart} testid=${testid} title=${title} summary=${summary} x=${x} ys=${ys}
    legend=${camps.map((c, i) => [short(c), sty[i].color, sty[i].legend])}
    spec=${{ xDays: true, yLabel: unit, series: camps.map((c, i) => ({ label: short(c), stroke: sty[i].color, width: sty[i].width, dash: sty[i].dash, kind: 'linepoints', size: 7 })), height: 200 }} />`;
}

// TestsTable: each test's results in each camp, by days to the bout —
// a handful of numbers, quicker read as a table than as a chart.
function TestsTable({ h }) {
  if (!h.tests.length) return html`<p class="muted" data-testid="camps-no-tests">No fitness or strength test inside these camps.</p>`;
  const bySeries = new Map();
  for (const t of h.tests) {
    if (!bySeries.has(t.series)) bySeries.set(t.series, { label: t.label, unit: t.unit, better: t.better, rows: new Map() });
    const s = bySeries.get(t.series);
    if (!s.rows.has(t.camp)) s.rows.set(t.camp, []);
    s.rows.get(t.camp).push(t);
  }
  return html`<h2>Tests in each camp</h2>
    <table class="camp-tests" data-testid="camps-tests">
      <thead><tr><th scope="col">Test</th>${h.camps.map((c) => html`<th scope="col">${heading(c)}</th>`)}</tr></thead>
      <tbody>${[...bySeries.entries()].map(([k, s]) => html`<tr data-series=${k}>
        <th scope="row">${s.label}${s.better === 'down' ? html`<br /><span class="muted small">lower is better</span>` : ''}</th>
        ${h.camps.map((c) => html`<td>${(s.rows.get(c.bout) || []).map((t) => html`<div>${fmtN(t.value, t.unit === 'kg' ? 0 : 1)} ${t.unit} <span class="muted small">${daysOut(t.days_out)}</span></div>`)}${!(s.rows.get(c.bout) || []).length && html`<span class="muted">–</span>`}</td>`)}
      </tr>`)}</tbody>
    </table>`;
}
