// Note: a few words about a fighter, and who reads them. A note is kept to
// the coach and staff unless it is shared with the athlete; the hub never
// sends a staff-only note to the athlete's device, and takes one back from
// it when a shared note is made staff-only.
import { html, useState, useEffect, useRef, useAthletes, useAthlete, AthleteSelect, NoAthletes, Choice, SaveLine, savedState, useAsync, savedHere } from './ui.js';
import { save, getRecord, getMeta } from './db.js';
import { localDay } from './record.js';

// useEdited loads the note named by ?edit= (undefined while it is read,
// null when there is none).
function useEdited() {
  const id = new URLSearchParams(location.search).get('edit');
  const rec = useAsync(async () => (id ? (await getRecord(id)) || null : null), [id], id ? undefined : null);
  if (!id) return null;
  if (rec === undefined) return undefined;
  return rec && rec.kind === 'note' && !rec.deleted ? rec : null;
}

export function Note() {
  const list = useAthletes();
  const editing = useEdited();
  const [athlete, pick] = useAthlete(list, editing && editing.athlete);
  const role = useAsync(() => getMeta('role').then((r) => r || ''), [], null);
  const [text, setText] = useState('');
  // Staff only unless the coach says otherwise: a note without an
  // audience is kept from the athlete's device.
  const [audience, setAudience] = useState('staff');
  const [state, setState] = useState(null);
  // Prefill once per edited note: a sync arriving while someone types must
  // never put the stored text back over what is being written.
  const prefilled = useRef('');
  useEffect(() => {
    if (!editing || prefilled.current === editing.id) return;
    prefilled.current = editing.id;
    const b = editing.body || {};
    setText(b.text || '');
    setAudience(b.audience === 'athlete' ? 'athlete' : 'staff');
  }, [editing]);

  if (list && !list.length) return html`<${NoAthletes} />`;
  if (role === null || editing === undefined) return html`<section data-testid="screen-note" data-ready="false"><h1>Note</h1><p class="muted">Loading…</p></section>`;
  // An athlete's own note is read by the athlete (it is theirs) and by the
  // coach and staff: there is nothing to choose.
  const ownPhone = role === 'athlete';
  const name = athlete ? athlete.name.split(' ')[0] : 'the athlete';

  const submit = async (e) => {
    e.preventDefault();
    if (!athlete) return setState({ error: 'Choose the athlete first.' });
    const t = text.trim();
    if (!t) return setState({ error: 'Write the note first.' });
    const body = { ...(editing ? editing.body : {}), text: t, audience: ownPhone ? 'athlete' : audience };
    setState({ saving: true });
    try {
      await save({ id: editing ? editing.id : undefined, kind: 'note', athlete: athlete.id, day: editing ? editing.day : localDay(), body });
      const who = body.audience === 'athlete' ? `shared with ${name}` : 'staff only';
      setState(savedState(`${savedHere()} (${who})`));
      if (!editing) setText('');
    } catch (err) {
      setState({ error: `Not saved: ${err.message}` });
    }
  };

  return html`<form onSubmit=${submit} data-testid="screen-note" data-ready="true" novalidate>
    <h1>Note</h1>
    ${editing && html`<p class="muted small" data-testid="editing">Correcting the note of ${editing.day}. The earlier version is kept in the hub's history.</p>`}
    ${!editing && html`<${AthleteSelect} list=${list} value=${athlete ? athlete.id : ''} onChange=${pick} />`}
    ${editing && athlete && html`<p><strong>${athlete.name}</strong></p>`}
    <label for="note-text">Note</label>
    <textarea id="note-text" data-testid="note-text" value=${text} onInput=${(e) => { setText(e.target.value); setState(null); }}></textarea>
    ${ownPhone
      ? html`<p class="muted small" data-testid="note-audience-own">Your coach and staff read your notes.</p>`
      : html`<label id="note-audience-label">Who reads it</label>
        <div class="row" role="group" aria-labelledby="note-audience-label" data-testid="note-audience" data-audience=${audience}>
          <${Choice} value="staff" current=${audience} onPick=${(v) => { setAudience(v); setState(null); }} testid="note-audience-staff">Staff only</${Choice}>
          <${Choice} value="athlete" current=${audience} onPick=${(v) => { setAudience(v); setState(null); }} testid="note-audience-athlete">Shared with ${name}</${Choice}>
        </div>
        <p class="muted small" data-testid="note-audience-words">${audience === 'athlete'
          ? `${name} sees this note on their own phone.`
          : `Only the coach and staff see this note; it never reaches ${name}'s phone.`}</p>`}
    <button class="primary" type="submit" data-testid="note-save" disabled=${state && state.saving}>${editing ? 'Save correction' : 'Save note'}</button>
    <${SaveLine} state=${state} />
  </form>`;
}
