// Drawing with the vendored uPlot, loaded only when a chart screen opens.
// These functions draw what the hub computed; they compute no numbers.
import { useState, useEffect, useRef } from '../ui.js';

let lib = null;
export function loadUPlot() {
  if (!lib) {
    if (!document.querySelector('link[data-uplot]')) {
      const l = document.createElement('link');
      l.rel = 'stylesheet';
      l.href = '/vendor/uplot/uPlot.min.css';
      l.dataset.uplot = 'true';
      document.head.appendChild(l);
    }
    lib = import('/vendor/uplot/uPlot.esm.js').then((m) => m.default, (e) => { lib = null; throw e; });
  }
  return lib;
}

export function cssVar(name, fallback) {
  const v = getComputedStyle(document.documentElement).getPropertyValue(name).trim();
  return v || fallback;
}

// dayTs: a calendar day as Unix seconds at 00:00 UTC (the x axis).
export const dayTs = (d) => Date.UTC(+d.slice(0, 4), +d.slice(5, 7) - 1, +d.slice(8, 10)) / 1000;

// countPoints: how many values the y series hold (for the page's own
// check that a chart is not empty, and for tests).
export function countPoints(data) {
  let n = 0;
  for (let i = 1; i < data.length; i++) for (const v of data[i]) if (v !== null && v !== undefined && Number.isFinite(v)) n++;
  return n;
}

// vline draws a labelled vertical marker at x (e.g. the weigh-in day).
function vlinePlugin(marks) {
  return {
    hooks: {
      draw: [(u) => {
        const ctx = u.ctx;
        for (const m of marks) {
          const x = Math.round(u.valToPos(m.x, 'x', true));
          if (x < u.bbox.left - 1 || x > u.bbox.left + u.bbox.width + 1) continue;
          ctx.save();
          ctx.strokeStyle = m.color;
          ctx.fillStyle = m.color;
          ctx.lineWidth = 2 * devicePixelRatio;
          ctx.setLineDash([6 * devicePixelRatio, 4 * devicePixelRatio]);
          ctx.beginPath();
          ctx.moveTo(x, u.bbox.top);
          ctx.lineTo(x, u.bbox.top + u.bbox.height);
          ctx.stroke();
          ctx.setLineDash([]);
          ctx.font = `${12 * devicePixelRatio}px system-ui, sans-serif`;
          ctx.textAlign = x > u.bbox.left + u.bbox.width / 2 ? 'right' : 'left';
          ctx.fillText(m.label, x + (ctx.textAlign === 'right' ? -6 : 6) * devicePixelRatio, u.bbox.top + 14 * devicePixelRatio);
          ctx.restore();
        }
      }],
    },
  };
}

// labelsPlugin writes a label beside each marked point or line end, so
// no marker on a chart goes unnamed. labels: [{x, y, text, color, scale}].
function labelsPlugin(labels) {
  return {
    hooks: {
      draw: [(u) => {
        const ctx = u.ctx;
        for (const l of labels) {
          if (l.y === null || l.y === undefined || !Number.isFinite(l.y)) continue;
          const x = Math.round(u.valToPos(l.x, 'x', true));
          const y = Math.round(u.valToPos(l.y, l.scale || 'y', true));
          if (x < u.bbox.left - 1 || x > u.bbox.left + u.bbox.width + 1) continue;
          ctx.save();
          ctx.font = `600 ${12 * devicePixelRatio}px system-ui, sans-serif`;
          ctx.fillStyle = l.color;
          const right = x > u.bbox.left + u.bbox.width * 0.6;
          ctx.textAlign = right ? 'right' : 'left';
          ctx.textBaseline = l.below ? 'top' : 'bottom';
          ctx.fillText(l.text, x + (right ? -8 : 8) * devicePixelRatio, y + (l.below ? 6 : -6) * devicePixelRatio);
          ctx.restore();
        }
      }],
    },
  };
}

const MO = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];

// daysOut names a day by its days to the bout: "bout", "−30 d".
export const daysOut = (v) => (v === 0 ? 'bout' : `${v < 0 ? '−' : '+'}${Math.abs(v)} d`);

// draw builds one uPlot chart in el. spec: {series: [{label, stroke,
// kind: 'line'|'points'|'linepoints'|'bars'|'dash', dash: [on, off], scale,
// width}], scales, axes, bands, marks, xDays}. With xDays the x values are
// days to the bout (…, −1, 0), not calendar days. Returns the plot (call
// destroy on unmount).
export async function draw(el, x, ys, spec) {
  const uPlot = await loadUPlot();
  const ink = cssVar('--muted', '#666');
  const grid = cssVar('--grid', '#ddd');
  const xDays = !!spec.xDays;
  const series = [{ label: xDays ? 'days to the bout' : 'day', value: (u, v) => (v == null ? '' : xDays ? daysOut(v) : new Date(v * 1000).toISOString().slice(0, 10)) }];
  for (const s of spec.series) {
    const o = { label: s.label, stroke: s.stroke, width: s.width || 2, scale: s.scale || 'y', spanGaps: s.spanGaps !== false, points: { show: false } };
    if (s.dash) o.dash = s.dash;
    if (s.kind === 'points') Object.assign(o, { width: 0, paths: () => null, points: { show: true, size: s.size || 8, stroke: s.stroke, fill: s.fill || s.stroke, width: 1 } });
    if (s.kind === 'linepoints') Object.assign(o, { points: { show: true, size: s.size || 6, stroke: s.stroke, fill: s.stroke } });
    if (s.kind === 'dash') o.dash = [8, 5];
    if (s.kind === 'bars') Object.assign(o, { fill: s.fill || s.stroke, width: 0, paths: uPlot.paths.bars({ size: [0.7, 36], align: 0 }), spanGaps: false });
    if (s.kind === 'step') Object.assign(o, { paths: uPlot.paths.stepped({ align: 1 }) });
    if (s.fill && s.kind !== 'bars' && s.kind !== 'points') o.fill = s.fill;
    series.push(o);
  }
  const axis = (extra) => ({
    stroke: ink, font: '13px system-ui, sans-serif', labelFont: '13px system-ui, sans-serif',
    grid: { stroke: grid, width: 1 }, ticks: { stroke: grid, width: 1 }, ...extra,
  });
  const width = Math.max(260, Math.floor(el.clientWidth || 320));
  const opts = {
    width, height: spec.height || 230,
    legend: { show: false },
    padding: [10, 18, 0, 0],
    cursor: { points: { size: 8 }, drag: { x: false, y: false } },
    scales: { x: { time: !xDays }, ...(spec.scales || {}) },
    series,
    bands: spec.bands || [],
    axes: [
      xDays
        ? axis({ values: (u, vals) => vals.map(daysOut), space: 56, incrs: [1, 7, 14, 28] })
        : axis({ values: (u, vals) => vals.map((v) => { const d = new Date(v * 1000); return `${d.getUTCDate()} ${MO[d.getUTCMonth()]}`; }), space: 64 }),
      axis({ scale: 'y', label: spec.yLabel || '', size: 56 }),
      ...(spec.y2 ? [axis({ scale: spec.y2.scale, side: 1, label: spec.y2.label, size: 48, grid: { show: false } })] : []),
    ],
    plugins: [...(spec.marks && spec.marks.length ? [vlinePlugin(spec.marks)] : []), ...(spec.labels && spec.labels.length ? [labelsPlugin(spec.labels)] : [])],
    tzDate: (ts) => uPlot.tzDate(new Date(ts * 1000), 'Etc/UTC'),
  };
  el.textContent = '';
  const u = new uPlot(opts, [x, ...ys], el);
  if (typeof ResizeObserver !== 'undefined') {
    const ro = new ResizeObserver(() => {
      const w = Math.max(260, Math.floor(el.clientWidth));
      if (Math.abs(w - u.width) > 2) u.setSize({ width: w, height: opts.height });
    });
    ro.observe(el);
    const destroy = u.destroy.bind(u);
    u.destroy = () => { ro.disconnect(); destroy(); };
  }
  return u;
}

// usePlot draws build()'s {x, ys, spec} into the element of the returned
// ref whenever deps change, and says what it drew: the points, the
// series, each series' label and each labelled marker ("|"-joined, for
// the page's own checks and for tests), or why it could not draw.
export function usePlot(build, deps) {
  const el = useRef(null);
  const [info, setInfo] = useState({ points: 0, series: 0, lines: '', marks: '', error: '' });
  useEffect(() => {
    let plot = null;
    let alive = true;
    const { x, ys, spec } = build();
    draw(el.current, x, ys, spec).then((u) => {
      if (!alive) { u.destroy(); return; }
      plot = u;
      const marks = [...(spec.marks || []).map((m) => m.label), ...(spec.labels || []).filter((l) => Number.isFinite(l.y)).map((l) => l.text)].join('|');
      setInfo({ points: countPoints([x, ...ys]), series: ys.length, lines: spec.series.map((s) => s.label).join('|'), marks, error: '' });
    }, (e) => alive && setInfo({ points: 0, series: 0, lines: '', marks: '', error: e.message }));
    return () => { alive = false; if (plot) plot.destroy(); };
  }, deps);
  return [el, info];
}

// useSchemeChanges counts the device's switches between light and dark,
// for a key that redraws the charts in the new colours.
export function useSchemeChanges() {
  const [n, setN] = useState(0);
  useEffect(() => {
    const mq = matchMedia('(prefers-color-scheme: dark)');
    const fn = () => setN((x) => x + 1);
    mq.addEventListener('change', fn);
    return () => mq.removeEventListener('change', fn);
  }, []);
  return n;
}
