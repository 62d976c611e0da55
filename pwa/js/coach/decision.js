// Decision: correcting a recorded decision (one the hub refused, or one
// corrected from Today). New decisions are recorded on the day board,
// beside the finding they answer.
import { html, useState, useEffect, useRef, useAsync, useAthletes, Link, SaveLine, savedState, savedHere } from '../ui.js';
import { save, getRecord } from '../db.js';
import { ruleName } from './common.js';

export function Decision() {
  const id = new URLSearchParams(location.search).get('edit');
  const rec = useAsync(async () => (id ? (await getRecord(id)) || null : null), [id], undefined);
  const list = useAthletes();
  const [note, setNote] = useState('');
  const [by, setBy] = useState('');
  const [state, setState] = useState(null);
  const prefilled = useRef('');
  useEffect(() => {
    // Prefill once: a sync arriving while the coach types must not put the
    // stored words back.
    if (!rec || prefilled.current === rec.id) return;
    prefilled.current = rec.id;
    setNote((rec.body && rec.body.note) || '');
    setBy((rec.body && rec.body.by) || '');
  }, [rec]);
  if (rec === undefined || list === null) return html`<section data-testid="screen-decision" data-ready="false"><h1>Decision</h1><p class="muted">Loading…</p></section>`;
  if (!rec || rec.kind !== 'decision' || rec.deleted) {
    return html`<section data-testid="screen-decision" data-ready="true"><h1>Decision</h1>
      <p>Decisions are recorded on the <${Link} to="/review">day board</${Link}>, beside the finding they answer.</p></section>`;
  }
  const a = list.find((x) => x.id === rec.athlete);
  const what = rec.body && rec.body.rule ? ruleName(rec.body.rule) : 'the whole day';
  const submit = async (e) => {
    e.preventDefault();
    const text = note.trim();
    if (!text) return setState({ error: 'Write what was decided (a few words are enough).' });
    const body = { ...rec.body, note: text };
    if (by.trim()) body.by = by.trim(); else delete body.by;
    setState({ saving: true });
    try {
      await save({ id: rec.id, kind: 'decision', athlete: rec.athlete, day: rec.day, body });
      setState(savedState(savedHere()));
    } catch (err) {
      setState({ error: `Not saved: ${err.message}` });
    }
  };
  return html`<form onSubmit=${submit} data-testid="screen-decision" data-ready="true" novalidate>
    <h1>Decision</h1>
    <p data-testid="editing">Correcting the decision of <strong>${a ? a.name : 'an athlete'}</strong>, ${rec.day}, on <strong>${what}</strong>. The earlier version is kept in the hub's history.</p>
    <label for="decision-edit-note">What was decided</label>
    <textarea id="decision-edit-note" data-testid="decision-edit-note" value=${note} onInput=${(e) => { setNote(e.target.value); setState(null); }}></textarea>
    <label for="decision-edit-by">Decided by</label>
    <input id="decision-edit-by" data-testid="decision-edit-by" value=${by} autocomplete="name" onInput=${(e) => { setBy(e.target.value); setState(null); }} />
    <button type="submit" class="primary" data-testid="decision-edit-save" disabled=${state && state.saving}>Save correction</button>
    <${SaveLine} state=${state} />
  </form>`;
}
