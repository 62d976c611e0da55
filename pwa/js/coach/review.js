// The day board: every athlete's flags for one camp day, most serious
// first, each with the hub's reason in numbers, the threshold it crossed,
// its caution, the records it used, and the coach's decision.
import { html, useState, useEffect, useRef, useRoute, useAthletes, usePending, useVersion, useAsync, Link, SaveLine, savedState } from '../ui.js';
import { save, byDay, getMeta } from '../db.js';
import { hubGet, remember, recall, readRecord, onData } from './api.js';
import {
  ruleName, LEVELS, levelOf, levelWord, levelRank, LevelMark, num, mass, addDays, isDay, today, longDay, query, recordSummary, fmtN,
} from './common.js';

// useDayFlags fetches the hub's flags for a day and keeps them current:
// again whenever records arrive or a sync completes, and every minute
// (the check-in hour passes without any new record).
export function useDayFlags(day) {
  const [st, setSt] = useState(() => {
    const c = recall('flags.' + day);
    return { flags: c ? c.data.flags : null, at: c ? c.at : 0, live: false, error: '', fetches: 0 };
  });
  useEffect(() => {
    let alive = true;
    let n = 0;
    const load = async () => {
      try {
        const d = await hubGet(`/api/flags?day=${encodeURIComponent(day)}`);
        if (!alive) return;
        remember('flags.' + day, d);
        n++;
        setSt({ flags: d.flags || [], at: Date.now(), live: true, error: '', fetches: n });
      } catch (e) {
        if (!alive) return;
        n++;
        setSt((o) => ({ ...o, live: false, error: e.message, offline: e.offline, fetches: n }));
      }
    };
    load();
    const off = onData(load);
    const t = setInterval(load, 60000);
    return () => { alive = false; off(); clearInterval(t); };
  }, [day]);
  return st;
}

// useLocalDecisions: decision records of the day on this device, latest per
// athlete and rule — shown at once, before the hub has them.
export function useLocalDecisions(day) {
  const v = useVersion();
  return useAsync(async () => {
    const out = new Map();
    for (const r of await byDay(day)) {
      if (r.kind !== 'decision' || r.deleted || !r.body) continue;
      const k = `${r.athlete}|${r.body.rule}`;
      const o = out.get(k);
      if (!o || r.stamp.l > o.stamp.l || (r.stamp.l === o.stamp.l && r.stamp.c > o.stamp.c)) out.set(k, r);
    }
    return out;
  }, [day, v], new Map());
}

function setQuery(params) {
  history.replaceState(null, '', query(location.pathname, params));
}

// groupByAthlete orders athletes by their most serious flag; athletes
// with nothing raised come last, so nobody is left off the board.
export function groupByAthlete(flags, athletes) {
  const by = new Map(athletes.map((a) => [a.id, []]));
  for (const f of flags || []) {
    if (!by.has(f.athlete)) by.set(f.athlete, []);
    by.get(f.athlete).push(f);
  }
  const name = (id) => (athletes.find((a) => a.id === id) || { name: id }).name;
  const worst = (fs) => Math.min(9, ...fs.map((f) => levelRank(levelOf(f))));
  return [...by.entries()]
    .map(([id, fs]) => ({ id, name: name(id), flags: fs.slice().sort((a, b) => levelRank(levelOf(a)) - levelRank(levelOf(b))) }))
    .sort((a, b) => worst(a.flags) - worst(b.flags) || a.name.localeCompare(b.name));
}

export function Review() {
  const params = new URLSearchParams(location.search);
  const [day, setDay] = useState(isDay(params.get('day')) ? params.get('day') : today());
  const [who, setWho] = useState(params.get('athlete') || '');
  const [levels, setLevels] = useState(() => new Set((params.get('level') || '').split(',').filter(Boolean)));
  const list = useAthletes();
  const st = useDayFlags(day);
  const local = useLocalDecisions(day);
  const pending = usePending();

  // The address holds the day and filters; a link or Back to another
  // address of this screen sets them from it.
  useRoute();
  const written = useRef(location.search);
  useEffect(() => {
    if (location.search === written.current) return;
    const q = new URLSearchParams(location.search);
    setDay(isDay(q.get('day')) ? q.get('day') : today());
    setWho(q.get('athlete') || '');
    setLevels(new Set((q.get('level') || '').split(',').filter(Boolean)));
    written.current = location.search;
  }, [location.search]);
  useEffect(() => { setQuery({ day, athlete: who, level: [...levels].join(',') }); written.current = location.search; }, [day, who, levels]);
  const toggle = (l) => setLevels((s) => { const n = new Set(s); if (n.has(l)) n.delete(l); else n.add(l); return n; });

  const athletes = list || [];
  const groups = groupByAthlete(st.flags, athletes)
    .filter((g) => !who || g.id === who)
    .map((g) => ({ ...g, shown: g.flags.filter((f) => !levels.size || levels.has(levelOf(f))) }));
  const counts = Object.fromEntries(LEVELS.map(([l]) => [l, (st.flags || []).filter((f) => levelOf(f) === l && (!who || f.athlete === who)).length]));

  return html`<section data-testid="screen-review" class="coach">
    <h1>Day board <span class="h1day">${longDay(day)}</span></h1>
    <p class="muted small">Prompts for your judgement. Health questions go to the medical team; the sanctioning body's rules come first.</p>
    <${DayPicker} day=${day} onPick=${setDay} testid="review" />
    <div class="filters">
      <div class="field">
        <label for="review-athlete">Athlete</label>
        <select id="review-athlete" data-testid="review-athlete" value=${who} onChange=${(e) => setWho(e.target.value)}>
          <option value="">Whole camp</option>
          ${athletes.map((a) => html`<option value=${a.id}>${a.name}</option>`)}
        </select>
      </div>
      <div class="field">
        <span class="label" id="review-levels-l">Show</span>
        <div class="chips lvchips" role="group" aria-labelledby="review-levels-l">
          ${LEVELS.map(([l, w]) => html`<button type="button" class="chip lvchip" data-testid=${`review-level-${l}`} aria-pressed=${levels.has(l) ? 'true' : 'false'}
            onClick=${() => toggle(l)}><${LevelMark} level=${l} /> ${w}<span class="count">${counts[l]}</span></button>`)}
        </div>
      </div>
    </div>
    <${Freshness} st=${st} />
    ${st.flags === null && !st.error && html`<p class="muted" data-testid="review-loading">Asking the hub for the day's flags…</p>`}
    ${st.flags === null && st.error && html`<div class="card warnbox" data-testid="review-error"><p><strong>No flags to show.</strong> ${st.error}.</p>
      <p class="muted">Flags are computed by the hub on the camp laptop. Join the camp Wi-Fi and this board fills in by itself.</p></div>`}
    ${st.flags !== null && list && !athletes.length && html`<p class="muted">No athletes on this device yet.</p>`}
    ${st.flags !== null && list && groups.map((g) => html`<${AthleteFlags} key=${g.id} g=${g} units=${(athletes.find((x) => x.id === g.id) || {}).units || 'kg'}
      day=${day} local=${local} pending=${pending} filtered=${levels.size > 0} />`)}
    <p class="links"><${Link} to=${query('/sheet', { day })} class="secondary linkbtn" data-testid="review-to-sheet">Wall sheet for this day</${Link}></p>
  </section>`;
}

export function DayPicker({ day, onPick, testid }) {
  const t = today();
  return html`<div class="daypick" role="group" aria-label="Day">
    <button type="button" class="secondary step" data-testid=${`${testid}-prev`} aria-label="Day before" title="Day before" onClick=${() => onPick(addDays(day, -1))}>‹</button>
    <input type="date" data-testid=${`${testid}-day`} aria-label="Camp day" value=${day} max=${addDays(t, 1)}
      onChange=${(e) => isDay(e.target.value) && onPick(e.target.value)} />
    <button type="button" class="secondary step" data-testid=${`${testid}-next`} aria-label="Day after" title="Day after" onClick=${() => onPick(addDays(day, 1))}>›</button>
    ${day !== t && html`<button type="button" class="secondary" data-testid=${`${testid}-today`} onClick=${() => onPick(t)}>Today</button>`}
  </div>`;
}

function clock(ms) {
  const d = new Date(ms);
  return `${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`;
}

function Freshness({ st }) {
  if (st.live) {
    return html`<p class="fresh ok" data-testid="review-fresh" data-fetches=${st.fetches} data-live="true">Live from the hub · updated ${clock(st.at)} · updates by itself as entries sync</p>`;
  }
  if (st.flags && st.error) {
    return html`<p class="fresh warn" data-testid="review-fresh" data-fetches=${st.fetches} data-live="false">Showing the copy from ${clock(st.at)}: ${st.error}. New entries appear once the hub is reachable.</p>`;
  }
  return null;
}

function AthleteFlags({ g, units, day, local, pending, filtered }) {
  const raised = g.flags.filter((f) => f.status !== 'forming').length;
  const forming = g.flags.length - raised;
  return html`<article class="athlete-block" data-testid=${`review-athlete-${g.id}`} data-athlete-name=${g.name}>
    <header class="ab-head">
      <h2>${g.name}</h2>
      <span class="muted small">${raised ? `${raised} raised` : 'nothing raised'}${forming ? ` · ${forming} not enough data yet` : ''}</span>
      <span class="spacer"></span>
      <${Link} to=${query('/athlete', { id: g.id, day })} class="secondary linkbtn" data-testid=${`review-charts-${g.id}`}>Charts</${Link}>
      <${Link} to=${query('/plan', { athlete: g.id })} class="secondary linkbtn" data-testid=${`review-plan-${g.id}`}>Plan</${Link}>
    </header>
    ${!g.flags.length && html`<p class="quiet" data-testid="review-none">No rule raised anything for this day. That covers the rules that had enough data; check the charts for the trend.</p>`}
    ${g.flags.length > 0 && !g.shown.length && filtered && html`<p class="muted small">Nothing at the levels chosen.</p>`}
    <div class="flag-list">
      ${g.shown.map((f, i) => html`<${FlagCard} key=${`${f.rule}-${i}`} f=${f} units=${units} day=${day} local=${local.get(`${f.athlete}|${f.rule}`)} pending=${pending} />`)}
    </div>
  </article>`;
}

// detail words for the extra numbers a flag carries
const DETAIL = {
  best_cm: ['best attempt', 'cm'], drop_pct: ['drop', '%'], drop_te: ['drop in typical errors', ''], cv_pct: ['day-to-day noise (CV)', '%'],
  te_cm: ['typical error', 'cm'], baseline_days: ['test days in baseline', ''], attempts: ['attempts', ''], threshold_pct: ['threshold', '%'],
  trend_kg: ['trend', 'kg'], latest_kg: ['latest morning mass', 'kg'], limit_kg: ['limit', 'kg'], excess_kg: ['above path', 'kg'],
  excess_pct_of_limit: ['above path, % of limit', '%'], slope_kg_week: ['slope', 'kg/week'], checkins: ['check-ins', ''],
  projected_kg: ['projected at final week', 'kg'], still_kg: ['still to lose in final week', 'kg'], days_to_final: ['days to final week', 'days'],
  acute_au: ['acute (7-day weighted)', 'AU/day'], chronic_au: ['chronic (28-day weighted)', 'AU/day'], days: ['days', ''],
  mean_au: ['mean daily load', 'AU'], sd_au: ['SD of daily load', 'AU'], strain: ['strain', 'AU'], weekly_load_au: ['week load', 'AU'],
  baseline_checkins: ['check-ins in baseline', ''], sd: ['SD', 'points'], sd_used: ['SD used', 'points'], z: ['z-score', ''], threshold_z: ['threshold', 'z'],
  so_far_au: ['load so far', 'AU'], deviation_pct: ['away from plan', '%'], week: ['camp week', ''], days_since: ['days since incident', 'days'],
};
function detailText(k, v, units) {
  const [w, u] = DETAIL[k] || [k.replace(/_/g, ' '), ''];
  if (u === 'kg') return `${w} ${mass(v, units)}`;
  if (u === 'kg/week') return `${w} ${mass(v, units, 2)}/week`;
  const d = Number.isInteger(v) ? 0 : Math.abs(v) >= 100 ? 0 : 2;
  return `${w} ${v.toFixed(d)}${u ? (u === '%' ? ' %' : ' ' + u) : ''}`;
}

const QUICK = ['No hard sparring today', 'Technical work only this afternoon', 'Reduce the session volume', 'Talk to the medical team', 'Keep the plan; check again tomorrow'];

function FlagCard({ f, units, day, local, pending }) {
  const lv = levelOf(f);
  const [open, setOpen] = useState(false);
  const [deciding, setDeciding] = useState(false);
  const decision = pickDecision(f.decision, local, pending);
  const nums = [];
  if (f.value !== null && f.value !== undefined) nums.push(['today', num(f.value, f.unit, units)]);
  if (f.reference !== null && f.reference !== undefined) nums.push(['compared with', num(f.reference, f.unit, units)]);
  if (f.threshold !== null && f.threshold !== undefined) nums.push(['threshold', num(f.threshold, f.unit, units)]);
  const details = Object.entries(f.details || {}).filter(([, v]) => Number.isFinite(v));
  return html`<div class=${`flag card lvl-${lv}`} data-testid="flag" data-rule=${f.rule} data-athlete=${f.athlete} data-level=${lv}
      data-decided=${decision ? 'true' : 'false'}>
    <div class="flag-head">
      <${LevelMark} level=${lv} />
      <span class="flag-level">${levelWord(lv)}</span>
      <h3 class="flag-title">${ruleName(f.rule)}</h3>
    </div>
    <p class="flag-reason" data-testid="flag-reason">${f.reason}</p>
    ${nums.length > 0 && html`<dl class="flag-nums" data-testid="flag-numbers">
      ${nums.map(([k, v]) => html`<div><dt>${k}</dt><dd class="num">${v}</dd></div>`)}
    </dl>`}
    ${f.threshold_name && html`<p class="small muted" data-testid="flag-threshold">Setting used: <code>${f.threshold_name}</code></p>`}
    ${details.length > 0 && html`<p class="small muted flag-details">${details.map(([k, v]) => detailText(k, v, units)).join(' · ')}</p>`}
    ${f.caution && html`<p class="caution" data-testid="flag-caution">${f.caution}</p>`}
    ${decision && html`<div class="decision" data-testid="flag-decision" data-state=${decision.state}>
      <strong>Decision:</strong> ${decision.note}${decision.by ? html` <span class="muted">— ${decision.by}</span>` : ''}
      <span class=${`tag ${decision.state === 'hub' ? 'ok' : ''}`}>${decision.state === 'hub' ? 'on the hub, seen by every coach' : decision.state === 'rejected' ? 'refused by the hub — see Settings' : 'saved here, waiting to sync'}</span>
    </div>`}
    <div class="flag-actions">
      <button type="button" class="secondary" data-testid="flag-inputs" aria-expanded=${open ? 'true' : 'false'} onClick=${() => setOpen(!open)}>
        ${open ? 'Hide' : 'Show'} the ${f.inputs && f.inputs.length ? `${f.inputs.length} ${f.inputs.length === 1 ? 'entry' : 'entries'}` : 'entries'} used</button>
      ${f.status !== 'forming' && html`<button type="button" class="secondary" data-testid="flag-decide" onClick=${() => setDeciding(!deciding)}>
        ${decision ? 'Change the decision' : 'Record a decision'}</button>`}
    </div>
    ${open && html`<${Inputs} ids=${f.inputs || []} units=${units} />`}
    ${deciding && html`<${DecisionForm} f=${f} day=${day} onDone=${() => setDeciding(false)} />`}
  </div>`;
}

// pickDecision prefers this device's decision while it waits to sync (or
// was refused); otherwise the hub's, which is the latest of every coach's.
function pickDecision(hub, local, pending) {
  if (local && (pending.waiting.has(local.id) || pending.rejected.has(local.id))) {
    return { note: local.body.note, by: local.body.by, state: pending.rejected.has(local.id) ? 'rejected' : 'waiting' };
  }
  if (hub) return { note: hub.note, by: hub.by, state: 'hub' };
  if (local) return { note: local.body.note, by: local.body.by, state: 'hub' };
  return null;
}

function Inputs({ ids, units }) {
  const rows = useAsync(() => Promise.all(ids.map((id) => readRecord(id).then((x) => ({ id, x })))), [ids.join(',')], null);
  if (!ids.length) return html`<p class="small muted" data-testid="flag-input-none">This finding rests on the absence of an entry, not on any record.</p>`;
  if (!rows) return html`<p class="small muted">Reading the entries…</p>`;
  return html`<ul class="inputs" data-testid="flag-input-list">
    ${rows.map(({ id, x }) => html`<li data-testid="flag-input" data-id=${id}>
      ${x ? html`<span class="num">${x.rec.day || ''}</span> ${recordSummary(x.rec, units)}${x.from === 'hub' ? html` <span class="muted small">(from the hub)</span>` : ''}`
        : html`<span class="muted">Entry ${id.slice(0, 8)}… is not on this device and the hub cannot be reached.</span>`}
    </li>`)}
  </ul>`;
}

function DecisionForm({ f, day, onDone }) {
  const [note, setNote] = useState('');
  const [by, setBy] = useState(localStorage.getItem('cb.coach.by') || '');
  const [state, setState] = useState(null);
  useEffect(() => { if (!by) getMeta('deviceName').then((n) => n && setBy((b) => b || n)); }, []);
  const submit = async (e) => {
    e.preventDefault();
    const text = note.trim();
    if (!text) return setState({ error: 'Write what was decided (a few words are enough).' });
    if (text.length > 2000) return setState({ error: 'The note is longer than 2000 characters.' });
    setState({ saving: true });
    try {
      const body = { rule: f.rule, note: text };
      if (by.trim()) body.by = by.trim().slice(0, 80);
      await save({ kind: 'decision', athlete: f.athlete, day, body });
      localStorage.setItem('cb.coach.by', by.trim());
      setState(savedState('Saved on this device; every coach sees it once it syncs'));
      setTimeout(onDone, 900);
    } catch (err) {
      setState({ error: `Not saved: ${err.message}` });
    }
  };
  return html`<form class="decide" onSubmit=${submit} data-testid="decision-form" novalidate>
    <div class="chips" role="group" aria-label="Quick notes">
      ${QUICK.map((q) => html`<button type="button" class="chip" data-testid="decision-quick" onClick=${() => setNote(q)}>${q}</button>`)}
    </div>
    <label for=${`dn-${f.athlete}-${f.rule}`}>What was decided</label>
    <textarea id=${`dn-${f.athlete}-${f.rule}`} data-testid="decision-note" value=${note} onInput=${(e) => setNote(e.target.value)}></textarea>
    <label for=${`db-${f.athlete}-${f.rule}`}>Decided by</label>
    <input id=${`db-${f.athlete}-${f.rule}`} data-testid="decision-by" value=${by} autocomplete="name" onInput=${(e) => setBy(e.target.value)} />
    <button type="submit" class="primary" data-testid="decision-save" disabled=${state && state.saving}>Save the decision</button>
    <${SaveLine} state=${state} />
  </form>`;
}

export { fmtN };
