// A bout's fight-week rules on the camp plan: the weigh-in rule set — a
// preset the hub keeps as data (GET /api/fightweek/presets), each shown
// with its source, how sure that source is and the caution to check the
// sanctioning body's current rules, or the coach's own custom set — and
// the stand-down rule sets applied to the fighter's incidents besides the
// ringside physicians' minimums, which always apply. A bout without rules
// stays without: official weigh-in only, as before.
import { html, useState, useEffect, Choice } from '../ui.js';
import { parseNum } from '../record.js';
import { hubGet, remember, recall } from './api.js';

// usePresets: the hub's rule sets, the last copy first when there is one.
export function usePresets() {
  const [st, setSt] = useState(() => {
    const c = recall('presets');
    return c ? { data: c.data, error: '' } : { data: null, error: '' };
  });
  useEffect(() => {
    let alive = true;
    hubGet('/api/fightweek/presets').then((d) => {
      remember('presets', d);
      if (alive) setSt({ data: d, error: '' });
    }, (e) => { if (alive) setSt((o) => ({ ...o, error: e.message })); });
    return () => { alive = false; };
  }, []);
  return st;
}

const num = (v) => (v === undefined || v === null ? '' : String(v));

// rulesForm turns a bout's stored rules into the form's (numbers as typed);
// null when the bout has none.
export function rulesForm(r) {
  if (!r) return null;
  const fd = r.fight_day || null;
  return {
    preset: r.preset || '',
    checks: (r.check_weights || []).map((c) => ({ days: num(c.days_before), pct: num(c.over_limit_pct) })),
    fd: fd ? (fd.over_limit_lb !== undefined && fd.over_limit_lb !== null ? 'lb' : 'pct') : '',
    fdv: fd ? num(fd.over_limit_lb ?? fd.over_official_pct) : '',
  };
}

// rulesBody turns the form's rules into the bout's `rules` (undefined for
// none), listing in words what cannot be read.
export function rulesBody(fr, errs) {
  if (!fr) return undefined;
  const out = {};
  if (fr.checks.length) {
    out.check_weights = fr.checks.map((c, i) => {
      const d = parseNum(c.days);
      const p = parseNum(c.pct);
      if (!Number.isInteger(d) || !Number.isFinite(p)) errs.push(`Check weight ${i + 1}: type the days before the weigh-in (a whole number) and the % over the limit.`);
      return { days_before: d, over_limit_pct: p };
    });
  }
  if (fr.fd) {
    const v = parseNum(fr.fdv);
    if (!Number.isFinite(v)) errs.push(fr.fd === 'lb' ? 'Fight-day weigh-in: type how many lb over the limit it allows.' : 'Fight-day weigh-in: type how many % over the official weigh-in mass it allows.');
    out.fight_day = fr.fd === 'lb' ? { over_limit_lb: v } : { over_official_pct: v };
  }
  if (fr.preset) out.preset = fr.preset;
  return out.check_weights || out.fight_day || out.preset ? out : undefined;
}

// BoutRules is the plan's section for them. f.rules is the form's rules
// (rulesForm), f.stand_down_sets the set ids; set(key, value) edits.
export function BoutRules({ f, set, presets }) {
  const data = presets.data;
  if (!data) {
    return html`<div class="card" data-testid="plan-rules-none">
      <p class="muted">${presets.error ? `The rule sets come from the hub, which cannot be reached now (${presets.error}).` : 'Loading the rule sets…'} This bout keeps the rules it has.</p>
    </div>`;
  }
  const fr = f.rules;
  const preset = fr && fr.preset ? data.weigh_in.find((p) => p.id === fr.preset) : null;
  const mode = !fr ? 'none' : preset ? preset.id : 'custom';
  const pick = (id) => {
    if (id === 'none') return set('rules', null);
    if (id === 'custom') return set('rules', { ...(fr || { checks: [], fd: '', fdv: '' }), preset: '' });
    const p = data.weigh_in.find((x) => x.id === id);
    if (!p) return undefined;
    set('rules', rulesForm({ ...p.rules, preset: p.id }));
    return undefined;
  };
  // Changing a number of a preset makes the set the coach's own.
  const edit = (nfr) => set('rules', { ...nfr, preset: '' });
  const sets = new Set(f.stand_down_sets || []);
  const toggle = (id) => {
    const n = new Set(sets);
    if (n.has(id)) n.delete(id); else n.add(id);
    set('stand_down_sets', data.stand_down.filter((s) => n.has(s.id)).map((s) => s.id));
  };
  return html`<div data-testid="plan-rules">
    <div class="field wide"><label for="plan-rules-pick">Weigh-in rules</label>
      <select id="plan-rules-pick" data-testid="plan-rules-pick" value=${mode} onChange=${(e) => pick(e.target.value)}>
        <option value="none">Official weigh-in only (no check weights, no fight-day cap)</option>
        ${data.weigh_in.map((p) => html`<option value=${p.id}>${p.name}</option>`)}
        <option value="custom">Custom rules (your own numbers)</option>
      </select></div>
    ${preset && html`<div class="card small" data-testid="plan-rules-preset" data-preset=${preset.id}>
      <p><strong>${preset.summary}</strong></p>
      <p data-testid="plan-rules-source">Source: ${preset.source}</p>
      <p data-testid="plan-rules-sure">How sure: ${preset.sure_words}.</p>
      <p class="caution" data-testid="plan-rules-caution">${preset.caution}</p>
      ${preset.weigh_in_type && preset.weigh_in_type !== f.weigh_in_type && html`<p class="muted" data-testid="plan-rules-type">This rule set assumes a weigh-in ${preset.weigh_in_type === 'same_day' ? 'on the day of the bout' : 'the day before the bout'}; this bout's weigh-in is set otherwise above — check which the bout's contract names.</p>`}
    </div>`}
    ${fr && html`<${CustomRules} fr=${fr} onEdit=${edit} own=${!preset} />`}
    ${mode === 'custom' && html`<p class="caution small" data-testid="plan-rules-caution">Your own rule set: check it against the bout's contract and the sanctioning body's current rules.</p>`}
    <h3>Stand-down rule sets</h3>
    <p class="small">Applied to this fighter's head incidents; the longest decides, and a stand-down ends only once cleared in writing by a doctor.</p>
    <ul class="rulesets" data-testid="plan-standdown-sets">
      ${data.stand_down.map((s) => {
        const always = s.id === 'arp';
        return html`<li data-testid="plan-standdown-set" data-set=${s.id}>
          ${always ? html`<p><strong>${s.name}</strong> — always applied.</p>`
            : html`<${Choice} value=${true} current=${sets.has(s.id)} onPick=${() => toggle(s.id)} testid=${`plan-standdown-${s.id}`}>${s.name}</${Choice}>`}
          <p class="small muted">Source: ${s.source} How sure: ${s.sure}.</p>
        </li>`;
      })}
    </ul>
    <p class="caution small">${(data.stand_down[0] || {}).caution || ''}</p>
  </div>`;
}

// CustomRules edits the numbers of a rule set; own says the set is the
// coach's (a preset's numbers are shown too, and editing one makes it own).
function CustomRules({ fr, onEdit, own }) {
  const put = (k, v) => onEdit({ ...fr, [k]: v });
  const putCheck = (i, k, v) => put('checks', fr.checks.map((c, j) => (j === i ? { ...c, [k]: v } : c)));
  return html`<div class="card" data-testid="plan-rules-custom">
    <p class="small muted">${own ? 'The numbers of this bout\'s rules.' : 'The preset\'s numbers; changing one makes the set your own.'}</p>
    ${fr.checks.map((c, i) => html`<fieldset class="chkrow" data-testid=${`plan-check-${i + 1}`}>
      <legend>Check weight ${i + 1}</legend>
      <div><label for=${`chk-d-${i}`}>Days before the weigh-in</label>
        <input id=${`chk-d-${i}`} inputmode="numeric" data-testid=${`plan-check-${i + 1}-days`} value=${c.days} onInput=${(e) => putCheck(i, 'days', e.target.value)} /></div>
      <div><label for=${`chk-p-${i}`}>At most % over the limit</label>
        <input id=${`chk-p-${i}`} inputmode="decimal" data-testid=${`plan-check-${i + 1}-pct`} value=${c.pct} onInput=${(e) => putCheck(i, 'pct', e.target.value)} /></div>
      <button type="button" class="secondary" aria-label=${`Remove check weight ${i + 1}`} data-testid=${`plan-check-${i + 1}-remove`} onClick=${() => put('checks', fr.checks.filter((_, j) => j !== i))}>✕</button>
    </fieldset>`)}
    <div class="row"><button type="button" class="secondary" data-testid="plan-check-add" onClick=${() => put('checks', [...fr.checks, { days: '', pct: '' }])}>Add a check weight</button></div>
    <span class="label">Fight-day weigh-in</span>
    <div class="row" role="group" aria-label="Fight-day weigh-in">
      <${Choice} value="" current=${fr.fd} onPick=${(v) => put('fd', v)} testid="plan-fd-none">No cap</${Choice}>
      <${Choice} value="lb" current=${fr.fd} onPick=${(v) => put('fd', v)} testid="plan-fd-lb">lb over the limit</${Choice}>
      <${Choice} value="pct" current=${fr.fd} onPick=${(v) => put('fd', v)} testid="plan-fd-pct">% over the official weigh-in mass</${Choice}>
    </div>
    ${fr.fd && html`<div class="field narrow"><label for="plan-fd-value">At most ${fr.fd === 'lb' ? 'lb over the limit' : '% over the official weigh-in mass'}</label>
      <input id="plan-fd-value" inputmode="decimal" data-testid="plan-fd-value" value=${fr.fdv} onInput=${(e) => put('fdv', e.target.value)} /></div>`}
  </div>`;
}
