// Wall sheet: the whole camp's day on one printed page — each fighter's
// flags with their reasons, the key numbers of the day, the decisions, and
// the caution notes once at the foot.
import { html, useState, useEffect, useAthletes, useAsync } from '../ui.js';
import { hubGet, getTables } from './api.js';
import { useDayFlags, useLocalDecisions, groupByAthlete, namesKnown, DayPicker } from './review.js';
import { ruleName, levelOf, LevelMark, isDay, today, longDay, query, mass, fmtN, flagTitles } from './common.js';
import { restrictionsOf, isRestriction, RestrictionStrip } from '../restrictions.js';

function useKeyNumbers(ids, day) {
  return useAsync(async () => {
    const out = {};
    await Promise.all(ids.map(async (id) => {
      try { out[id] = await hubGet(query(`/api/athletes/${encodeURIComponent(id)}/series`, { from: day, to: day })); } catch (_) { out[id] = null; }
    }));
    return out;
  }, [ids.join(','), day], {});
}

function keyLine(s) {
  if (!s) return 'Key numbers unavailable (hub not reachable).';
  const u = s.units;
  const parts = [];
  const m = s.mass;
  if (m.morning_kg[0] != null) parts.push(`mass ${mass(m.morning_kg[0], u)}`);
  if (m.trend_kg[0] != null) parts.push(`trend ${mass(m.trend_kg[0], u)}`);
  if (m.path_kg[0] != null) parts.push(`plan ${mass(m.path_kg[0], u)}`);
  if (m.limit_kg) parts.push(`limit ${mass(m.limit_kg, u)}${m.weigh_in_day ? ` on ${m.weigh_in_day}` : ''}`);
  if (s.jump.mean_cm[0] != null) parts.push(`CMJ ${fmtN(s.jump.mean_cm[0])} cm${s.jump.baseline_cm[0] != null ? ` (baseline ${fmtN(s.jump.baseline_cm[0])})` : ''}`);
  if (s.load.daily_au[0] != null) parts.push(`load ${fmtN(s.load.daily_au[0], 0)} AU${s.load.ratio[0] != null ? `, A:C ${fmtN(s.load.ratio[0], 2)}` : ''}`);
  parts.push(`sparring 7 d ${s.sparring.rolling_rounds[0]}/${s.sparring.cap_rounds[0]} rounds`);
  if (s.wellness.total[0] != null) parts.push(`wellness ${fmtN(s.wellness.total[0], 0)}/25`);
  return parts.join(' · ');
}

const hhmm = (ms) => { const d = new Date(ms); return `${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`; };

export function Sheet() {
  const p = new URLSearchParams(location.search);
  const [day, setDay] = useState(isDay(p.get('day')) ? p.get('day') : today());
  useEffect(() => { history.replaceState(null, '', query('/sheet', { day })); }, [day]);
  const list = useAthletes();
  const st = useDayFlags(day);
  const local = useLocalDecisions(day);
  const athletes = list || [];
  const keys = useKeyNumbers(athletes.map((a) => a.id), day);
  const tables = useAsync(() => getTables().catch(() => null), [], null);
  const ready = st.flags !== null && list !== null && namesKnown(st.flags, athletes, st.names);
  const groups = ready ? groupByAthlete(st.flags, athletes, st.names) : [];
  const names = Object.fromEntries(groups.map((g) => [g.id, g.name]));
  const cautions = [...new Set((st.flags || []).map((f) => f.caution).filter(Boolean))];
  return html`<section class="coach sheet" data-testid="screen-sheet">
    <div class="no-print sheet-tools">
      <${DayPicker} day=${day} onPick=${setDay} testid="sheet" />
      <button type="button" class="secondary" data-testid="sheet-print" onClick=${() => window.print()}>Print this sheet</button>
    </div>
    <h1>Wall sheet — ${longDay(day)}</h1>
    <p class="muted small">${st.at ? `Flags as the hub computed them at ${hhmm(st.at)}${st.live ? '' : ' (last copy; the hub cannot be reached now)'}.` : 'Waiting for the hub.'} Flags are prompts for the coaches' judgement; the medical team decides on health.</p>
    ${ready && html`<${RestrictionStrip} list=${restrictionsOf(st.flags)} names=${names} day=${day} testid="sheet-restrictions" compact=${true} />`}
    <div class="sheet-grid">
      ${groups.map((g) => {
        const raised = g.flags.filter((f) => f.status !== 'forming' && !isRestriction(f));
        const forming = g.flags.filter((f) => f.status === 'forming');
        const titles = flagTitles(g.flags, tables);
        const dayDec = g.flags.find((f) => f.decision && f.decision.scope === 'day' && f.decision.note);
        const localDay = local.get(`${g.id}|`);
        const dayNote = (dayDec && dayDec.decision.note) || (localDay && localDay.body.note) || '';
        return html`<article class="sheet-ath" data-testid=${`sheet-athlete-${g.id}`}>
          <h2>${g.name}${g.held ? html` <span class="held-tag" data-testid="sheet-held"><span class="rx-mark" aria-hidden="true"></span>on a stand-down</span>` : ''}</h2>
          <p class="keys" data-testid="sheet-keys">${keyLine(keys[g.id])}</p>
          ${dayNote && html`<p class="dec" data-testid="sheet-day-decision">Decision for the day: ${dayNote}</p>`}
          <ul>
            ${!raised.length && html`<li class="forming">Nothing raised today.</li>`}
            ${raised.map((f) => {
              const d = local.get(`${f.athlete}|${f.rule}`);
              const note = ((f.decision && f.decision.scope !== 'day' && f.decision.note) || (d && d.body.note) || '').trim();
              return html`<li data-testid="sheet-flag" data-rule=${f.rule} data-level=${levelOf(f)}><${LevelMark} level=${levelOf(f)} />
                <span><strong>${titles.get(f)}:</strong> ${f.reason}${note ? html` <span class="dec">Decision: ${note}</span>` : ''}</span></li>`;
            })}
            ${forming.length > 0 && html`<li class="forming"><${LevelMark} level="forming" /><span>Not enough data yet: ${forming.map((f) => ruleName(f.rule).toLowerCase()).join('; ')}.</span></li>`}
          </ul>
        </article>`;
      })}
    </div>
    ${cautions.length > 0 && html`<div class="sheet-cautions" data-testid="sheet-cautions"><strong>Cautions</strong>${cautions.map((c) => html`<p>${c}</p>`)}</div>`}
    <p class="sheet-cautions sheet-key" data-testid="sheet-key">Marks: <${LevelMark} level="alert" /> act today · <${LevelMark} level="watch" /> keep an eye on · <${LevelMark} level="info" /> worth knowing · <${LevelMark} level="forming" /> not enough data yet · <span class="rx-mark" aria-hidden="true"></span> stand-down in force.</p>
  </section>`;
}
