// The day board: every athlete's flags for one camp day, most serious
// first, each with the hub's reason in numbers, the threshold it crossed,
// its caution, the records it used, and the coach's decision.
import { html, useState, useEffect, useRef, useRoute, useAthletes, usePending, useVersion, useAsync, Link, SaveLine, savedState } from '../ui.js';
import { save, byDay, getMeta } from '../db.js';
import { hubGet, remember, recall, readRecord, onData, getTables } from './api.js';
import {
  ruleName, LEVELS, levelOf, levelWord, levelRank, LevelMark, num, mass, addDays, isDay, today, longDay, query, recordSummary, fmtN,
  flagTitles, settingWords, clockOfStamp, unitFor,
} from './common.js';
import { restrictionsOf, isRestriction, RestrictionStrip } from '../restrictions.js';

// useDayFlags fetches the hub's flags for a day and keeps them current:
// again whenever records arrive or a sync completes, and every minute
// (the check-in hour passes without any new record).
export function useDayFlags(day) {
  const [st, setSt] = useState(() => {
    const c = recall('flags.' + day);
    return { flags: c ? c.data.flags : null, names: c ? namesOf(c.data) : {}, at: c ? c.at : 0, live: false, error: '', fetches: 0 };
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
        setSt({ flags: d.flags || [], names: namesOf(d), at: Date.now(), live: true, error: '', fetches: n });
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

// namesOf: athlete id → name from the hub's answer (it names every
// athlete it flags, so a board opened before the first sync never shows
// an id where a name belongs).
function namesOf(d) {
  const out = {};
  for (const a of (d && d.athletes) || []) if (a && a.id) out[a.id] = a.name;
  return out;
}

// useLocalDecisions: decision records of the day on this device, latest per
// athlete and rule (rule "" for a decision on the fighter's whole day) —
// shown at once, before the hub has them.
export function useLocalDecisions(day) {
  const v = useVersion();
  return useAsync(async () => {
    const out = new Map();
    for (const r of await byDay(day)) {
      if (r.kind !== 'decision' || r.deleted || !r.body) continue;
      const k = `${r.athlete}|${r.body.rule || ''}`;
      const o = out.get(k);
      if (!o || r.stamp.l > o.stamp.l || (r.stamp.l === o.stamp.l && r.stamp.c > o.stamp.c)) out.set(k, r);
    }
    return out;
  }, [day, v], new Map());
}

// setQuery writes the board's filters into its own address, only while
// the board is still the screen shown: a write after a move to another
// screen would put the board's query on that screen's address.
function setQuery(path, params) {
  if (location.pathname !== path) return;
  history.replaceState(null, '', query(path, params));
}

// groupByAthlete orders athletes: those under a stand-down first (a
// restriction outranks every prompt), then by their most serious flag;
// athletes with nothing raised come last, so nobody is left off the board.
// names maps ids to names for athletes not (yet) on this device.
export function groupByAthlete(flags, athletes, names = {}) {
  const by = new Map(athletes.map((a) => [a.id, []]));
  for (const f of flags || []) {
    if (!by.has(f.athlete)) by.set(f.athlete, []);
    by.get(f.athlete).push(f);
  }
  const name = (id) => (athletes.find((a) => a.id === id) || {}).name || names[id] || '';
  const held = new Set(restrictionsOf(flags).map((r) => r.athlete));
  const worst = (fs) => Math.min(9, ...fs.filter((f) => !isRestriction(f)).map((f) => levelRank(levelOf(f))));
  return [...by.entries()]
    .map(([id, fs]) => ({ id, name: name(id), held: held.has(id), flags: fs.slice().sort((a, b) => levelRank(levelOf(a)) - levelRank(levelOf(b))) }))
    .sort((a, b) => (b.held - a.held) || worst(a.flags) - worst(b.flags) || a.name.localeCompare(b.name));
}

// namesKnown: every athlete the flags name has a name to show.
export function namesKnown(flags, athletes, names) {
  const have = new Set(athletes.map((a) => a.id));
  return (flags || []).every((f) => have.has(f.athlete) || names[f.athlete]);
}

// useSteadyOrder keeps the board's order as first shown while updates
// arrive (a coach reading the third fighter must not see him jump); a
// fighter new to the day joins at the end. resort() takes the order the
// data gives now. The order is per day.
function useSteadyOrder(day, groups, ready) {
  const ref = useRef({ day: '', ids: [] });
  const [, bump] = useState(0);
  if (ready && ref.current.day !== day) ref.current = { day, ids: groups.map((g) => g.id) };
  const at = new Map(ref.current.ids.map((id, i) => [id, i]));
  const steady = groups.slice().sort((a, b) => (at.has(a.id) ? at.get(a.id) : 1e6) - (at.has(b.id) ? at.get(b.id) : 1e6));
  const moved = ready && steady.some((g, i) => groups[i].id !== g.id);
  const resort = () => { ref.current = { day, ids: groups.map((g) => g.id) }; bump((x) => x + 1); };
  return [steady, moved, resort];
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
  const here = useRef(location.pathname).current;
  useEffect(() => { setQuery(here, { day, athlete: who, level: [...levels].join(',') }); if (location.pathname === here) written.current = location.search; }, [day, who, levels]);
  const toggle = (l) => setLevels((s) => { const n = new Set(s); if (n.has(l)) n.delete(l); else n.add(l); return n; });

  const athletes = list || [];
  const tables = useAsync(() => getTables().catch(() => null), [], null);
  // The board appears once names and flags are both in hand, and not
  // before: a quiet placeholder until then, so nothing on it moves.
  const ready = st.flags !== null && list !== null && namesKnown(st.flags, athletes, st.names);
  const all = groupByAthlete(st.flags, athletes, st.names);
  const [steady, moved, resort] = useSteadyOrder(day, all, ready);
  const groups = steady
    .filter((g) => !who || g.id === who)
    .map((g) => ({ ...g, shown: g.flags.filter((f) => !isRestriction(f) && (!levels.size || levels.has(levelOf(f)))) }));
  const counts = Object.fromEntries(LEVELS.map(([l]) => [l, (st.flags || []).filter((f) => !isRestriction(f) && levelOf(f) === l && (!who || f.athlete === who)).length]));
  const names = Object.fromEntries(all.map((g) => [g.id, g.name]));
  const held = restrictionsOf(st.flags);

  return html`<section data-testid="screen-review" class="coach" data-ready=${ready ? 'true' : 'false'}>
    <h1>Day board <span class="h1day">${longDay(day)}</span></h1>
    ${ready && html`<${RestrictionStrip} list=${held} names=${names} day=${day} testid="review-restrictions" />`}
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
            onClick=${() => toggle(l)}><${LevelMark} level=${l} /> ${w}<span class="count">${ready ? counts[l] : ''}</span></button>`)}
        </div>
      </div>
    </div>
    <${Freshness} st=${st} />
    ${!ready && !(st.flags === null && st.error) && html`<p class="muted board-wait" data-testid="review-loading">Asking the hub for the day's flags…</p>`}
    ${st.flags === null && st.error && html`<div class="card warnbox" data-testid="review-error"><p><strong>No flags to show.</strong> ${st.error}.</p>
      <p class="muted">Flags are computed by the hub on the camp laptop. Join the camp Wi-Fi and this board fills in by itself.</p></div>`}
    ${ready && !all.length && html`<p class="muted">No athletes on this device yet.</p>`}
    ${ready && moved && html`<p class="small muted resort" data-testid="review-resort-note">New findings arrived; the order is kept as first shown so nothing moves while you read.
      <button type="button" class="secondary" data-testid="review-resort" onClick=${resort}>Sort again</button></p>`}
    ${ready && groups.map((g) => html`<${AthleteFlags} key=${g.id} g=${g} units=${(athletes.find((x) => x.id === g.id) || {}).units || 'kg'}
      day=${day} local=${local} pending=${pending} filtered=${levels.size > 0} tables=${tables} />`)}
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

function AthleteFlags({ g, units, day, local, pending, filtered, tables }) {
  const prompts = g.flags.filter((f) => !isRestriction(f));
  const raised = prompts.filter((f) => f.status !== 'forming').length;
  const forming = prompts.length - raised;
  const titles = flagTitles(g.flags, tables);
  const dayDecision = pickDecision(hubDayDecision(g.flags), local.get(`${g.id}|`), pending);
  const [deciding, setDeciding] = useDraftOpen(`${day}|${g.id}|`);
  return html`<article class=${`athlete-block${g.held ? ' held' : ''}`} data-testid=${`review-athlete-${g.id}`} data-athlete-name=${g.name} data-held=${g.held ? 'true' : 'false'}>
    <header class="ab-head">
      <h2>${g.name}</h2>
      ${g.held && html`<span class="held-tag" data-testid="review-held"><span class="rx-mark" aria-hidden="true"></span>On a stand-down</span>`}
      <span class="muted small">${raised ? `${raised} raised` : 'nothing raised'}${forming ? ` · ${forming} not enough data yet` : ''}</span>
      <span class="spacer"></span>
      <${Link} to=${query('/athlete', { id: g.id, day })} class="secondary linkbtn" data-testid=${`review-charts-${g.id}`}>Charts</${Link}>
      <${Link} to=${query('/plan', { athlete: g.id })} class="secondary linkbtn" data-testid=${`review-plan-${g.id}`}>Plan</${Link}>
      ${raised > 0 && html`<button type="button" class="secondary" data-testid="day-decide" aria-expanded=${deciding ? 'true' : 'false'} onClick=${() => setDeciding(!deciding)}>
        ${dayDecision ? 'Change the decision for the day' : 'One decision for the whole day'}</button>`}
    </header>
    ${dayDecision && html`<${DecisionLine} d=${dayDecision} testid="day-decision" label="Decision for the whole day" />`}
    ${deciding && html`<${DecisionForm} athlete=${g.id} rule="" day=${day} onDone=${() => setDeciding(false)}
      hint=${`Covers every finding of ${g.name} on this day.`} />`}
    ${!prompts.length && html`<p class="quiet" data-testid="review-none">No rule raised anything for this day. That covers the rules that had enough data; check the charts for the trend.</p>`}
    ${prompts.length > 0 && !g.shown.length && filtered && html`<p class="muted small">Nothing at the levels chosen.</p>`}
    <div class="flag-list">
      ${g.shown.map((f) => html`<${FlagCard} key=${titles.get(f)} f=${f} title=${titles.get(f)} units=${units} day=${day} tables=${tables}
        local=${local.get(`${f.athlete}|${f.rule}`)} pending=${pending} />`)}
    </div>
  </article>`;
}

// hubDayDecision: the hub's decision on a fighter's whole day, if any
// flag carries one.
function hubDayDecision(fs) {
  const f = fs.find((x) => x.decision && x.decision.scope === 'day');
  return f ? f.decision : null;
}

// Drafts of decisions being written live outside the components, keyed by
// day, athlete and rule, so no update of the board (new flags, a sync, a
// re-render) can lose a half-typed note or close the form.
const drafts = new Map();
function useDraftOpen(key) {
  const [open, setOpen] = useState(() => !!(drafts.get(key) || {}).open);
  const set = (v) => { drafts.set(key, { ...(drafts.get(key) || {}), open: v }); setOpen(v); };
  return [open, set];
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
  days_left: ['days left of the minimum', 'days'], planned_au: ['planned week load', 'AU'], band_low_au: ['planned band from', 'AU'],
  band_high_au: ['planned band to', 'AU'], hard_rounds: ['hard rounds', ''],
};
function detailText(k, v, units) {
  const [w, u] = DETAIL[k];
  if (u === 'kg') return `${w} ${mass(v, units)}`;
  if (u === 'kg/week') return `${w} ${mass(v, units, 2)}/week`;
  const d = Number.isInteger(v) ? 0 : Math.abs(v) >= 100 ? 0 : u === 'cm' ? 1 : 2;
  return `${w} ${v.toFixed(d)}${u ? (u === '%' ? ' %' : ' ' + unitFor(u, v, d)) : ''}`;
}

const QUICK = ['No hard sparring today', 'Technical work only this afternoon', 'Reduce the session volume', 'Talk to the medical team', 'Keep the plan; check again tomorrow'];

function FlagCard({ f, title, units, day, local, pending, tables }) {
  const lv = levelOf(f);
  const [open, setOpen] = useState(false);
  const [deciding, setDeciding] = useDraftOpen(`${day}|${f.athlete}|${f.rule}|${title}`);
  const decision = pickDecision(f.decision && f.decision.scope !== 'day' ? f.decision : null, local, pending);
  const nums = [];
  if (f.value !== null && f.value !== undefined) nums.push(['today', num(f.value, f.unit, units)]);
  if (f.reference !== null && f.reference !== undefined) nums.push(['compared with', num(f.reference, f.unit, units)]);
  if (f.threshold !== null && f.threshold !== undefined) nums.push(['threshold', num(f.threshold, f.unit, units)]);
  const details = Object.entries(f.details || {}).filter(([k, v]) => Number.isFinite(v) && DETAIL[k]);
  const setting = settingWords(f, tables, units);
  return html`<div class=${`flag card lvl-${lv}`} data-testid="flag" data-rule=${f.rule} data-athlete=${f.athlete} data-level=${lv}
      data-decided=${decision || (f.decision && f.decision.scope === 'day') ? 'true' : 'false'}>
    <div class="flag-head">
      <${LevelMark} level=${lv} />
      <span class="flag-level">${levelWord(lv)}</span>
      <h3 class="flag-title" data-testid="flag-title">${title}</h3>
    </div>
    <p class="flag-reason" data-testid="flag-reason">${f.reason}</p>
    ${nums.length > 0 && html`<dl class="flag-nums" data-testid="flag-numbers">
      ${nums.map(([k, v]) => html`<div><dt>${k}</dt><dd class="num">${v}</dd></div>`)}
    </dl>`}
    ${setting && html`<p class="small muted" data-testid="flag-threshold">${setting}</p>`}
    ${details.length > 0 && html`<p class="small muted flag-details">${details.map(([k, v]) => detailText(k, v, units)).join(' · ')}</p>`}
    ${f.caution && html`<p class="caution" data-testid="flag-caution">${f.caution}</p>`}
    ${decision && html`<${DecisionLine} d=${decision} testid="flag-decision" label="Decision" />`}
    ${!decision && f.decision && f.decision.scope === 'day' && html`<p class="small muted" data-testid="flag-day-decided">Covered by the decision for the whole day.</p>`}
    <div class="flag-actions">
      <button type="button" class="secondary" data-testid="flag-inputs" aria-expanded=${open ? 'true' : 'false'} onClick=${() => setOpen(!open)}>
        ${open ? 'Hide' : 'Show'} the ${f.inputs && f.inputs.length ? `${f.inputs.length} ${f.inputs.length === 1 ? 'entry' : 'entries'}` : 'entries'} used</button>
      ${f.status !== 'forming' && html`<button type="button" class="secondary" data-testid="flag-decide" onClick=${() => setDeciding(!deciding)}>
        ${decision ? 'Change the decision' : 'Record a decision'}</button>`}
    </div>
    ${open && html`<${Inputs} ids=${f.inputs || []} units=${units} />`}
    ${deciding && html`<${DecisionForm} athlete=${f.athlete} rule=${f.rule} draftKey=${`${day}|${f.athlete}|${f.rule}|${title}`} day=${day} onDone=${() => setDeciding(false)} />`}
  </div>`;
}

// DecisionLine: what was decided, by whom and when, and where it stands.
function DecisionLine({ d, testid, label }) {
  return html`<div class="decision" data-testid=${testid} data-state=${d.state}>
    <strong>${label}:</strong> ${d.note}${d.by || d.at ? html` <span class="muted">— ${[d.by, clockOfStamp(d.at)].filter(Boolean).join(', ')}</span>` : ''}
    <span class=${`tag ${d.state === 'hub' ? 'ok' : ''}`}>${d.state === 'hub' ? 'on the hub, seen by every coach' : d.state === 'rejected' ? 'refused by the hub — see Settings' : 'saved here, waiting to sync'}</span>
  </div>`;
}

// pickDecision prefers this device's decision while it waits to sync (or
// was refused); otherwise the hub's, which is the latest of every coach's.
// A decision without words is no decision: nothing is shown for it.
function pickDecision(hub, local, pending) {
  const ok = (n) => typeof n === 'string' && n.trim() !== '';
  if (local && ok(local.body.note) && (pending.waiting.has(local.id) || pending.rejected.has(local.id))) {
    return { note: local.body.note, by: local.body.by, at: local.at, state: pending.rejected.has(local.id) ? 'rejected' : 'waiting' };
  }
  if (hub && ok(hub.note)) return { note: hub.note, by: hub.by, at: hub.at, state: 'hub' };
  if (local && ok(local.body.note)) return { note: local.body.note, by: local.body.by, at: local.at, state: 'hub' };
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

function DecisionForm({ athlete, rule, day, onDone, hint, draftKey }) {
  const key = draftKey || `${day}|${athlete}|${rule}`;
  const draft = drafts.get(key) || {};
  const [note, setNoteState] = useState(draft.note || '');
  const [by, setByState] = useState(draft.by || localStorage.getItem('cb.coach.by') || '');
  const [state, setState] = useState(null);
  const keep = (k, v) => drafts.set(key, { ...(drafts.get(key) || {}), [k]: v });
  const setNote = (v) => { keep('note', v); setNoteState(v); };
  const setBy = (v) => { keep('by', v); setByState(v); };
  useEffect(() => { if (!by) getMeta('deviceName').then((n) => n && setByState((b) => b || n)); }, []);
  const submit = async (e) => {
    e.preventDefault();
    const text = note.trim();
    if (!text) return setState({ error: 'Write what was decided (a few words are enough).' });
    if (text.length > 2000) return setState({ error: 'The note is longer than 2000 characters.' });
    setState({ saving: true });
    try {
      const body = { note: text };
      if (rule) body.rule = rule;
      if (by.trim()) body.by = by.trim().slice(0, 80);
      await save({ kind: 'decision', athlete, day, body });
      localStorage.setItem('cb.coach.by', by.trim());
      drafts.delete(key);
      setState(savedState('Saved on this device; every coach sees it once it syncs'));
      setTimeout(onDone, 900);
    } catch (err) {
      setState({ error: `Not saved: ${err.message}` });
    }
  };
  const id = `${athlete}-${rule || 'day'}`;
  return html`<form class="decide" onSubmit=${submit} data-testid=${rule ? 'decision-form' : 'day-decision-form'} novalidate>
    ${hint && html`<p class="small muted">${hint}</p>`}
    <div class="chips" role="group" aria-label="Quick notes">
      ${QUICK.map((q) => html`<button type="button" class="chip" data-testid="decision-quick" onClick=${() => setNote(q)}>${q}</button>`)}
    </div>
    <label for=${`dn-${id}`}>What was decided</label>
    <textarea id=${`dn-${id}`} data-testid="decision-note" value=${note} onInput=${(e) => setNote(e.target.value)}></textarea>
    <label for=${`db-${id}`}>Decided by</label>
    <input id=${`db-${id}`} data-testid="decision-by" value=${by} autocomplete="name" onInput=${(e) => setBy(e.target.value)} />
    <button type="submit" class="primary" data-testid="decision-save" disabled=${state && state.saving}>Save the decision</button>
    <${SaveLine} state=${state} />
  </form>`;
}

export { fmtN };
