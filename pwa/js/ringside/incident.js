// Ringside incident: one large button, a confirmation naming the athlete
// and what happened, then the incident is written through the app's write
// path (saved on this phone, synced like every entry) and the stand-down
// is shown in plain words.
import { html, useState, useRef, useEffect, savedState, SaveLine, savedHere } from '../ui.js';
import { showPanel } from './rounds.js';
import { save } from '../db.js';
import { localDay } from '../record.js';
import { INCIDENTS, HOLD_TEXT } from '../screens.js';
import './style.js';

const STANDS_DOWN = new Set(['head_knock', 'knockdown', 'stoppage', 'knockout', 'knockout_loc']);

export function RingsideIncident({ list, chosen }) {
  const [step, setStep] = useState('closed'); // closed | pick | confirm | done
  const [who, setWho] = useState('');
  const [type, setType] = useState('head_knock');
  const [state, setState] = useState(null);
  const box = useRef(null);
  useEffect(() => { if (step !== 'closed') showPanel(box.current); }, [step]);
  const name = (id) => (list.find((a) => a.id === id) || {}).name || '';
  const label = (INCIDENTS.find(([v]) => v === type) || [type, type])[1];
  const open = () => {
    setWho(chosen.length === 1 ? chosen[0] : '');
    setType('head_knock');
    setState(null);
    setStep('pick');
  };
  const write = async () => {
    setState({ saving: true });
    try {
      await save({ kind: 'incident', athlete: who, day: localDay(), body: { type } });
      setState(savedState(`${savedHere()}: ${label.toLowerCase()}, ${name(who)}`));
      setStep('done');
    } catch (err) { setState({ error: `Not saved: ${err.message}` }); }
  };

  if (step === 'closed') {
    return html`<button type="button" class="rs-incident" data-testid="ringside-incident" onClick=${open}>Incident: head knock, knockdown…</button>`;
  }
  if (step === 'done') {
    return html`<div class="rs-panel" data-testid="ringside-incident-done" ref=${box}>
      <${SaveLine} state=${state} />
      ${STANDS_DOWN.has(type) && html`<p class="rs-hold rs-standdown" data-testid="ringside-standdown" tabindex="-1">${name(who)}: ${HOLD_TEXT}</p>
        <p class="muted small">Treat a head knock or knockdown as a suspected concussion: stop the round for this athlete. Return to contact follows the medical team's graded steps.</p>`}
      <button type="button" class="secondary" data-testid="ringside-incident-close" onClick=${() => setStep('closed')}>Back to the rounds</button>
    </div>`;
  }
  return html`<div class="rs-panel" role="group" aria-labelledby="rs-incident-title" data-testid="ringside-incident-panel" ref=${box}>
    <p class="rs-confirm-title" id="rs-incident-title" tabindex="-1">${step === 'confirm' ? 'Log this incident?' : 'Incident'}</p>
    ${step === 'pick' && html`
      <p class="rs-q">Who?</p>
      <div class="row" role="group" aria-label="Athlete">
        ${list.map((a) => html`<button type="button" class="choice" data-testid=${`ringside-incident-athlete-${a.id}`}
          aria-pressed=${who === a.id ? 'true' : 'false'} onClick=${() => setWho(a.id)}>${a.name}</button>`)}
      </div>
      <p class="rs-q">What happened?</p>
      <div class="row" role="group" aria-label="Incident type">
        ${INCIDENTS.map(([v, l]) => html`<button type="button" class="choice" data-testid=${`ringside-incident-type-${v}`}
          aria-pressed=${type === v ? 'true' : 'false'} onClick=${() => setType(v)}>${l}</button>`)}
      </div>
      <button type="button" class="primary rs-warn-btn" data-testid="ringside-incident-next" disabled=${!who}
        onClick=${() => setStep('confirm')}>${who ? 'Next' : 'Pick the athlete'}</button>`}
    ${step === 'confirm' && html`
      <p data-testid="ringside-incident-summary"><strong>${name(who)}</strong>: ${label}</p>
      ${STANDS_DOWN.has(type) && html`<p class="rs-hold">This starts a stand-down for ${name(who)}. ${HOLD_TEXT}</p>`}
      <button type="button" class="primary rs-warn-btn" data-testid="ringside-incident-confirm" onClick=${write} disabled=${state && state.saving}>Yes, log it</button>`}
    <button type="button" class="secondary" data-testid="ringside-incident-cancel" onClick=${() => (step === 'confirm' ? setStep('pick') : setStep('closed'))}>${step === 'confirm' ? 'Go back' : 'Cancel'}</button>
    <${SaveLine} state=${state} />
  </div>`;
}
