// Ringside pieces of the Rounds screen: athlete chips with the hub's
// 7-day sparring count against the cap and any stand-down beside them,
// and the gate that asks before a sparring round is logged for an athlete
// on hold (it still records: the coach decides, and the hub flags it).
import { html, useState, useRef, useEffect } from '../ui.js';
import { HOLD_TEXT } from '../screens.js';
import { hhmm } from './standing.js';
import { restrictionsOf, RestrictionStrip } from '../restrictions.js';
import './style.js';

// RingsideRestrictions: every running stand-down the hub reports for the
// day, above the clock and the athletes, worded as on the day board.
export function RingsideRestrictions({ list, standing, day }) {
  const held = restrictionsOf(Object.values(standing.byId).flatMap((b) => b.holds || []));
  const names = Object.fromEntries(list.map((a) => [a.id, a.name]));
  return html`<${RestrictionStrip} list=${held} names=${names} day=${day} testid="ringside-restrictions" />`;
}

// holdOf: the hub's stand-down for an athlete, or the device's own open
// incident (logged here or pulled, not yet seen by the hub's answer).
function holdOf(standing, localHolds, id) {
  const b = standing.byId[id];
  if (b && b.spar_on_hold) return b.spar_hold_reason || HOLD_TEXT;
  if (localHolds && localHolds[id]) return `an open incident on this device. ${HOLD_TEXT}`;
  return '';
}

function Standing({ standing, id }) {
  const b = standing.byId[id];
  if (b) {
    return html`<span class="rs-spar" data-testid=${`ringside-spar-${id}`}
      data-rounds=${b.spar_rounds_7d} data-cap=${b.spar_cap_rounds}>
      <b class="num">${b.spar_rounds_7d}</b>${b.spar_cap_rounds > 0 ? html`<span class="num"> / ${b.spar_cap_rounds}</span>` : ''}
      <small>sparring rounds</small><small>last 7 days${standing.state === 'kept' ? `, as of ${hhmm(standing.at)}` : ''}</small></span>`;
  }
  if (standing.state === 'loading') return html`<span class="rs-spar muted" data-testid=${`ringside-spar-${id}`}>asking the hub…</span>`;
  if (standing.state === 'live') return html`<span class="rs-spar muted" data-testid=${`ringside-spar-${id}`} data-unknown="true">no numbers from the hub yet</span>`;
  return html`<span class="rs-spar muted" data-testid=${`ringside-spar-${id}`} data-unknown="true">Sparring count and hold status unknown offline</span>`;
}

// AthleteChips replaces the plain chips: the same buttons (testids
// round-athlete-<id>, round-count-<id>), each with its standing beside it.
export function AthleteChips({ list, chosen, toggle, counts, editing, standing, localHolds }) {
  return html`<div class="rs-chips" role="group" aria-label="Athletes">
    ${list.map((a) => {
      const hold = holdOf(standing, null, a.id);
      return html`<div class=${`rs-athlete${hold ? ' on-hold' : ''}`} data-testid=${`ringside-athlete-${a.id}`}>
        <button type="button" class="chip rs-chip" data-testid=${`round-athlete-${a.id}`} data-athlete-name=${a.name}
          aria-pressed=${chosen.includes(a.id) ? 'true' : 'false'} disabled=${!!editing && a.id !== editing.athlete} onClick=${() => toggle(a.id)}>
          <span class="rs-name">${a.name}</span><span class="count" data-testid=${`round-count-${a.id}`} aria-label="rounds today">${counts[a.id] || 0}</span></button>
        <${Standing} standing=${standing} id=${a.id} />
        ${hold && html`<p class="rs-hold" data-testid=${`ringside-hold-${a.id}`}>No sparring — on hold: ${hold}</p>`}
        ${!hold && localHolds && localHolds[a.id] && html`<p class="rs-hold" data-testid=${`ringside-hold-${a.id}`}>No sparring — on hold: an open incident on this device. ${HOLD_TEXT}</p>`}
      </div>`;
    })}
    ${standing.state === 'offline' && html`<p class="rs-offline" data-testid="ringside-offline">Hub out of reach: hold status unknown offline. Check the incident list before sparring.</p>`}
  </div>`;
}

// shortReason drops the stand-down sentence the panel already shows.
function shortReason(why) {
  return why.replace(/[:;,.]?\s*no sparring or contact until cleared in writing by a doctor\.?\s*$/i, '.').replace(/^\./, '') || why;
}

// showPanel brings a panel that opened below the tapped button into view
// and moves the screen reader's focus to its title.
export function showPanel(el) {
  if (!el) return;
  el.scrollIntoView({ block: 'nearest' });
  const t = el.querySelector('[tabindex="-1"]');
  if (t) t.focus({ preventScroll: true });
}

// useSparGate returns [tryDone, panel]: tryDone logs at once unless a
// sparring round names an athlete on hold; then panel asks first.
export function useSparGate({ activity, chosen, list, standing, localHolds, onDone }) {
  const [ask, setAsk] = useState(null);
  const box = useRef(null);
  useEffect(() => { if (ask) showPanel(box.current); }, [ask]);
  const tryDone = () => {
    if (activity !== 'spar') return onDone();
    const held = chosen.map((id) => [id, holdOf(standing, localHolds, id)]).filter(([, h]) => h);
    if (!held.length) return onDone();
    setAsk(held.map(([id, h]) => ({ id, name: (list.find((a) => a.id === id) || {}).name || id, why: h })));
    return undefined;
  };
  const panel = ask && html`<div class="rs-confirm" role="alertdialog" aria-labelledby="rs-hold-title" data-testid="round-hold-ask" ref=${box}>
    <p class="rs-confirm-title" id="rs-hold-title" tabindex="-1">${HOLD_TEXT}</p>
    ${ask.map((x) => html`<p><strong>${x.name}</strong> is on hold: ${shortReason(x.why)}</p>`)}
    <p>Log this sparring round anyway? It is recorded as it happened, and the hub flags it for the coach and the medical team.</p>
    <button type="button" class="primary rs-warn-btn" data-testid="round-hold-confirm" onClick=${() => { setAsk(null); onDone(); }}>Log it anyway</button>
    <button type="button" class="secondary" data-testid="round-hold-cancel" onClick=${() => setAsk(null)}>Cancel</button>
  </div>`;
  return [tryDone, panel || null];
}
