// Settings: this device, the hub, storage, rejected entries, app version.
import { html, useState, useEffect, useAsync, useVersion, useAthletes, navigate, savedHere } from './ui.js';
import { allMeta, setMeta, rejectedList, discard, save, observeStamp } from './db.js';
import { requestSync } from './sync.js';
import { VOCAB } from './vocab.js';
import { fieldWords, kindLabel } from './checks.js';

// The screen that corrects each kind, from the hub's registry.
const EDIT_ROUTE = Object.fromEntries(Object.entries(VOCAB.kinds).filter(([, v]) => v.screen && v.dated).map(([k, v]) => [k, v.screen]));
// editRouteOf: the screen that corrects a rejected entry (drop jumps are
// entered with the tests, not on the CMJ grid).
const editRouteOf = (rec) => (rec.kind === 'jump' && rec.body && rec.body.test === 'dj' ? '/tests' : EDIT_ROUTE[rec.kind]);
// correctURL opens the screen that corrects a rejected entry: a bout on
// its plan, an athlete on camp set-up's list, the rest on their own screen.
function correctURL(r) {
  const rec = r.record;
  if (rec.kind === 'bout' && rec.athlete) return `/plan?athlete=${encodeURIComponent(rec.athlete)}&bout=${encodeURIComponent(rec.id)}`;
  if (rec.kind === 'athlete') return '/camp';
  if (rec.kind === 'settings' && rec.athlete) return `/thresholds?athlete=${encodeURIComponent(rec.athlete)}`;
  const route = editRouteOf(rec);
  return route ? `${route}?edit=${encodeURIComponent(r.id)}` : '';
}
const WHY = { VALIDATION: 'refused by the hub', FORBIDDEN: 'not allowed from this device', BAD_REQUEST: 'refused by the hub', TOO_LARGE: 'too large for the hub' };

// hhmm is a stamp's local time of day.
function hhmm(ms) {
  const d = new Date(ms);
  return `${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`;
}

// reapply saves this device's overtaken version again, as a new correction.
async function reapply(r) {
  const rec = r.record;
  await observeStamp(r.by && r.by.stamp); // sort after the version that overtook it
  await save({ id: rec.id, kind: rec.kind, athlete: rec.athlete, day: rec.day, body: rec.body });
}

// entryWords names a rejected entry: "Check-in of Ana Pereira, 2026-12-03".
function entryWords(rec, names) {
  const what = kindLabel(rec.kind);
  const who = rec.kind === 'athlete' ? (rec.body && rec.body.name) : names[rec.athlete];
  return `${what[0].toUpperCase()}${what.slice(1)}${who ? ` of ${who}` : ''}${rec.day ? `, ${rec.day}` : ''}`;
}

export function Settings({ build }) {
  const v = useVersion();
  const meta = useAsync(allMeta, [v], {});
  // The list shows once both the refused entries and the athletes' names
  // are in hand, so an entry is never first shown without its athlete.
  const rejectedOrNull = useAsync(rejectedList, [v], null);
  const athleteList = useAthletes();
  const listReady = rejectedOrNull !== null && athleteList !== null;
  const rejected = rejectedOrNull || [];
  const names = Object.fromEntries((athleteList || []).map((a) => [a.id, a.name]));
  const [name, setName] = useState(null);
  const [persist, setPersist] = useState('');
  const [saved, setSaved] = useState('');
  useEffect(() => {
    if (navigator.storage && navigator.storage.persisted) {
      navigator.storage.persisted().then((p) => setPersist(p ? 'granted' : 'not yet'));
    } else setPersist('unavailable');
  }, []);
  const askPersist = async () => {
    if (!navigator.storage || !navigator.storage.persist) return setPersist('unavailable');
    const ok = await navigator.storage.persist();
    setPersist(ok ? 'granted' : 'refused');
    await setMeta('persist', ok);
  };
  const saveName = async (e) => {
    e.preventDefault();
    await setMeta('deviceName', (name ?? meta.deviceName ?? '').trim());
    setSaved(savedHere());
  };
  const persistText = {
    granted: 'Granted: the browser will not clear this app\'s entries when storage runs low.',
    'not yet': 'Not granted yet. Tap the button; on a phone, install the app to the home screen first.',
    refused: 'The browser said no for now. Installing the app to the home screen usually changes that. Sync often.',
    unavailable: 'This browser cannot keep storage persistent here (it needs the https address).',
  }[persist] || '';

  return html`<section data-testid="screen-settings">
    <h1>Settings</h1>
    <form class="card" onSubmit=${saveName}>
      <label for="settings-device-name">Name of this device</label>
      <input id="settings-device-name" data-testid="settings-device-name" value=${name ?? meta.deviceName ?? ''} placeholder="e.g. Ringside tablet"
        onInput=${(e) => { setName(e.target.value); setSaved(''); }} />
      <button class="secondary" type="submit" data-testid="settings-save">Save name</button>
      ${saved && html`<p class="saved" data-testid="settings-saved">${saved}</p>`}
      <p class="muted small">Device id <span class="num" data-testid="settings-device-id">${meta.deviceId || '…'}</span></p>
    </form>
    <div class="card">
      <h2>Hub</h2>
      <p>Address: <strong data-testid="settings-hub">${location.origin}</strong></p>
      <p class="muted small">This app belongs to the hub at this address. Always open it the same way (same address and port), or this device's entries stay behind under the old address.</p>
      <p class="muted small">Epoch <span class="num">${meta.epoch || 'not synced yet'}</span>, pulled through <span class="num">${meta.cursor || 0}</span>, clock offset <span class="num">${Math.round((meta.offset || 0) / 1000)} s</span>.</p>
      <p data-testid="settings-pairing">${meta.token ? html`Paired${meta.role ? ` as ${meta.role}` : ''}.` : 'Not paired: the hub accepts entries from this device only if it runs open (the coach\'s laptop) or after joining.'}</p>
      <div class="row">
        <button class="secondary" type="button" data-testid="settings-sync" onClick=${() => requestSync('manual')}>Sync now</button>
        <button class="secondary" type="button" data-testid="settings-join" onClick=${() => navigate('/join')}>Join the camp with a code</button>
      </div>
    </div>
    <div class="card" data-testid="settings-install">
      <h2>Install</h2>
      <p class="muted small">Install the app before logging: on Android, the browser menu → Install app; on iPhone, Share → Add to Home Screen. Entries made in a browser tab and in the installed app are kept apart on iPhone.</p>
    </div>
    <div class="card">
      <h2>Storage</h2>
      <p data-testid="settings-persist-answer" data-state=${persist}>${persistText}</p>
      <button class="secondary" type="button" data-testid="settings-persist" onClick=${askPersist}>Keep entries on this device</button>
    </div>
    <div class="card" id="rejected" data-testid="rejected-list">
      <h2>Rejected entries</h2>
      ${!listReady && html`<p class="muted" data-testid="rejected-loading">Reading this device's entries…</p>`}
      ${listReady && rejected.length === 0 && html`<p class="muted">None. Every entry the hub received was accepted.</p>`}
      ${listReady && rejected.map((r) => (r.code === 'OVERTAKEN' ? html`<div class="entry" data-testid=${`rejected-${r.n}`} data-code="OVERTAKEN">
        <div class="what">Your correction of <strong>${entryWords(r.record, names).replace(/^./, (c) => c.toLowerCase())}</strong> was overtaken by ${r.by.name ? html`<strong>${r.by.name}</strong>'s` : 'another device\'s'} ${r.by.deleted ? 'delete' : 'correction'} at <span class="num">${hhmm(r.by.stamp && r.by.stamp.l)}</span>. Both are in the entry's history.</div>
        ${!r.by.deleted && html`<button class="secondary" type="button" data-testid=${`rejected-reapply-${r.n}`} onClick=${() => reapply(r)}>Apply mine again</button>`}
        <button class="secondary" type="button" data-testid=${`rejected-discard-${r.n}`} onClick=${() => discard(r.n)}>Keep theirs</button>
      </div>` : html`<div class="entry" data-testid=${`rejected-${r.n}`}>
        <div class="what" data-field=${r.field} data-code=${r.code}><strong>${entryWords(r.record, names)}</strong>${r.field ? html` — <strong data-testid=${`rejected-field-${r.n}`}>${fieldWords(r.record.kind, r.field)}</strong>` : ''}: ${r.reason}
          <span class="tag warn">${WHY[r.code] || 'refused by the hub'}</span></div>
        ${correctURL(r) && !r.record.deleted && html`<button class="secondary" type="button" data-testid=${`rejected-edit-${r.n}`} onClick=${() => navigate(correctURL(r))}>Correct</button>`}
        <button class="secondary danger" type="button" data-testid=${`rejected-discard-${r.n}`} onClick=${() => discard(r.n)}>Discard</button>
      </div>`))}
      <p class="muted small">A rejected entry stays here until you correct it (a new version is sent) or discard it.</p>
    </div>
    <div class="card"><h2>App</h2><p class="muted small">Build <span class="num" data-testid="settings-build">${build || 'not installed yet'}</span></p></div>
  </section>`;
}
