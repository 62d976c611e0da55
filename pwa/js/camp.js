// Camp set-up, for the coach: the passphrase on first start, the camp
// certificate's fingerprint, the athletes, join codes for devices (code and
// QR), the device list with removal, and the backup download. Athletes are
// records like any other (saved here first, synced); everything about
// devices is the hub's and needs it reachable.
import { html, useState, useEffect, useAthletes, useAsync, useVersion, SaveLine, savedState, plural, Link } from './ui.js';
import { save, byKind } from './db.js';
import { uuidv7 } from './uuid.js';
import { hubGet, hubPost, HubReadError } from './coach/api.js';
import { getMeta } from './db.js';

function why(err) {
  if (err instanceof HubReadError) return err.offline ? 'the hub cannot be reached; try again on the camp Wi-Fi' : err.message;
  return err && err.message ? err.message : String(err);
}

// authFetch fetches a binary answer (QR image, backup) with this device's pass.
async function authFetch(url) {
  const token = await getMeta('token');
  const res = await fetch(url, { headers: token ? { Authorization: `Bearer ${token}` } : {}, cache: 'no-store' });
  if (!res.ok) throw new Error(`the hub answered ${res.status}`);
  return res.blob();
}

function dataURL(blob) {
  return new Promise((resolve, reject) => {
    const r = new FileReader();
    r.onload = () => resolve(r.result);
    r.onerror = () => reject(r.error);
    r.readAsDataURL(blob);
  });
}

function Passphrase({ me, onDone }) {
  const [p1, setP1] = useState('');
  const [p2, setP2] = useState('');
  const [state, setState] = useState(null);
  const [open, setOpen] = useState(false);
  const submit = async (e) => {
    e.preventDefault();
    if (p1.length < 10) return setState({ error: 'Use at least 10 characters: a short sentence is easy to remember and hard to guess.' });
    if (p1 !== p2) return setState({ error: 'The two passphrases differ; type the same one twice.' });
    try {
      await hubPost('/api/setup', { passphrase: p1 });
      setP1('');
      setP2('');
      setOpen(false);
      setState(null);
      onDone();
    } catch (err) { setState({ error: `Not set: ${why(err)}` }); }
  };
  if (me.passphraseSet && !open) {
    return html`<div class="card" data-testid="camp-passphrase-set">
      <h2>Coach's passphrase</h2>
      <p class="muted">Set. Only this laptop can change it; devices already signed in stay signed in (remove any you no longer trust below).</p>
      <button type="button" data-testid="camp-pass-change" onClick=${() => setOpen(true)}>Change passphrase</button>
    </div>`;
  }
  return html`<form class="card" onSubmit=${submit} data-testid="camp-passphrase" novalidate>
    <h2>${me.passphraseSet ? "Change the coach's passphrase" : "Set the coach's passphrase"}</h2>
    <p class="muted">${me.passphraseSet ? 'Only this laptop can change it. The old one stops working at once for new sign-ins.' : 'Needed once, on this laptop. It lets you sign in as the coach on a tablet; phones join with codes instead.'}</p>
    <label for="pp1">Passphrase</label>
    <input id="pp1" type="password" autocomplete="new-password" data-testid="camp-pass1" value=${p1} onInput=${(e) => setP1(e.target.value)} />
    <label for="pp2">Once more</label>
    <input id="pp2" type="password" autocomplete="new-password" data-testid="camp-pass2" value=${p2} onInput=${(e) => setP2(e.target.value)} />
    <button class="primary" type="submit" data-testid="camp-pass-save">${me.passphraseSet ? 'Change passphrase' : 'Set passphrase'}</button>
    <${SaveLine} state=${state} />
  </form>`;
}

// useRoster lists every athlete record on this device, archived ones too.
function useRoster() {
  const v = useVersion();
  return useAsync(async () => (await byKind('athlete'))
    .filter((r) => !r.deleted && r.body && r.body.name)
    .sort((a, b) => a.body.name.localeCompare(b.body.name)), [v], []);
}

const sameName = (a, b) => a.trim().toLocaleLowerCase() === b.trim().toLocaleLowerCase();

// Roster: the camp's athletes with rename and archive. An archived athlete
// leaves the pickers, the day board and the sheet; every entry is kept and
// the athlete can be brought back.
function Roster() {
  const roster = useRoster();
  const [editing, setEditing] = useState(null); // {id, name, confirm}
  const [state, setState] = useState(null);
  const put = async (r, change, words) => {
    try {
      await save({ id: r.id, kind: 'athlete', athlete: r.id, body: { ...r.body, ...change } });
      setState(savedState(words));
      return true;
    } catch (err) { setState({ error: `Not saved: ${why(err)}` }); return false; }
  };
  const rename = async (r) => {
    const name = editing.name.trim();
    if (!name) return setState({ error: 'Type the athlete\'s name.' });
    const twin = roster.find((x) => x.id !== r.id && sameName(x.body.name, name));
    if (twin && editing.confirm !== name) {
      setEditing({ ...editing, confirm: name });
      return setState({ error: `Another athlete is already called ${twin.body.name}${twin.body.active === false ? ' (archived)' : ''}. Save again to use the same name.` });
    }
    if (await put(r, { name }, `${r.body.name} is now ${name}.`)) setEditing(null);
  };
  const archive = (r) => {
    const body = { ...r.body };
    delete body.active;
    return r.body.active === false
      ? save({ id: r.id, kind: 'athlete', athlete: r.id, body }).then(() => setState(savedState(`${r.body.name} is back in the pickers and on the sheet.`)), (err) => setState({ error: `Not saved: ${why(err)}` }))
      : put(r, { active: false }, `${r.body.name} is archived: out of the pickers and the sheet; every entry is kept.`);
  };
  return html`<section class="card" data-testid="camp-roster">
    <h2>Athletes</h2>
    ${!roster.length && html`<p class="muted">No athlete yet: add the first below.</p>`}
    <ul class="devices">${roster.map((r) => html`<li data-testid=${'camp-roster-' + r.id} data-name=${r.body.name} data-archived=${r.body.active === false ? 'true' : 'false'}>
      ${editing && editing.id === r.id ? html`<label for=${'rn-' + r.id}>New name</label>
        <input id=${'rn-' + r.id} data-testid=${'camp-rename-input-' + r.id} value=${editing.name} onInput=${(e) => { setEditing({ ...editing, name: e.target.value }); setState(null); }} />
        <button class="primary" type="button" data-testid=${'camp-rename-save-' + r.id} onClick=${() => rename(r)}>Save name</button>
        <button class="secondary" type="button" onClick=${() => { setEditing(null); setState(null); }}>Cancel</button>`
      : html`<p><strong>${r.body.name}</strong> · ${r.body.units || 'kg'}${r.body.active === false ? ' · archived' : ''}</p>
        <button class="secondary" type="button" data-testid=${'camp-rename-' + r.id} onClick=${() => { setEditing({ id: r.id, name: r.body.name }); setState(null); }}>Rename</button>
        <button class="secondary" type="button" data-testid=${'camp-archive-' + r.id} onClick=${() => archive(r)}>${r.body.active === false ? 'Bring back' : 'Archive'}</button>`}
    </li>`)}</ul>
    <${SaveLine} state=${state} />
  </section>`;
}

function AddAthlete() {
  const roster = useRoster();
  const [name, setName] = useState('');
  const [units, setUnits] = useState('kg');
  const [sex, setSex] = useState('');
  const [year, setYear] = useState('');
  const [state, setState] = useState(null);
  const [twinOK, setTwinOK] = useState('');
  const submit = async (e) => {
    e.preventDefault();
    if (!name.trim()) return setState({ error: 'Type the athlete\'s name.' });
    const twin = roster.find((r) => sameName(r.body.name, name));
    if (twin && twinOK !== name.trim()) {
      setTwinOK(name.trim());
      return setState({ error: `${twin.body.name} is already on the list${twin.body.active === false ? ' (archived: bring them back from the list above)' : ''}. To add a second athlete with the same name, press Add athlete again.` });
    }
    const id = uuidv7();
    const body = { name: name.trim(), units };
    if (sex) body.sex = sex;
    if (year) body.birth_year = Number(year);
    try {
      await save({ id, kind: 'athlete', athlete: id, body });
      setState(savedState(`${body.name} added on this device; the hub gets it at the next sync.`));
      setName(''); setYear(''); setTwinOK('');
    } catch (err) { setState({ error: `Not saved: ${why(err)}` }); }
  };
  return html`<form class="card" onSubmit=${submit} data-testid="camp-add-athlete" novalidate>
    <h2>Add an athlete</h2>
    <label for="an">Name</label>
    <input id="an" data-testid="camp-athlete-name" value=${name} onInput=${(e) => { setName(e.target.value); setState(null); }} />
    <fieldset class="inline"><legend>Units on screen</legend>
      ${['kg', 'lb'].map((u) => html`<label class="opt"><input type="radio" name="units" value=${u} checked=${units === u} onChange=${() => setUnits(u)} data-testid=${'camp-units-' + u} /> ${u}</label>`)}
    </fieldset>
    <label for="as">Sex (optional)</label>
    <select id="as" data-testid="camp-athlete-sex" value=${sex} onChange=${(e) => setSex(e.target.value)}>
      <option value="">—</option><option value="f">female</option><option value="m">male</option>
    </select>
    <label for="ay">Birth year (optional)</label>
    <input id="ay" inputmode="numeric" data-testid="camp-athlete-year" value=${year} onInput=${(e) => setYear(e.target.value.replace(/\D/g, '').slice(0, 4))} />
    <button class="primary" type="submit" data-testid="camp-athlete-save">Add athlete</button>
    <${SaveLine} state=${state} />
  </form>`;
}

function JoinCode({ athletes }) {
  const [role, setRole] = useState('athlete');
  const [athlete, setAthlete] = useState('');
  const [code, setCode] = useState(null);
  const [qr, setQr] = useState('');
  const [err, setErr] = useState('');
  const [left, setLeft] = useState(0);
  useEffect(() => {
    if (!code) return undefined;
    const tick = () => setLeft(Math.max(0, Math.round((new Date(code.expires) - Date.now()) / 1000)));
    tick();
    const t = setInterval(tick, 1000);
    return () => clearInterval(t);
  }, [code]);
  const make = async () => {
    setErr(''); setCode(null); setQr('');
    if (role === 'athlete' && !athlete) return setErr('Pick the athlete this phone belongs to.');
    try {
      const j = await hubPost('/api/joins', { role, athlete: role === 'athlete' ? athlete : '' });
      setCode(j);
      const blob = await authFetch('/api/joins/qr.png?code=' + encodeURIComponent(j.code));
      setQr(await dataURL(blob)); // the page's policy allows data: images, not blob:
    } catch (e) { setErr(`No code made: ${why(e)}`); }
  };
  return html`<section class="card" data-testid="camp-join">
    <h2>Join a phone or tablet</h2>
    <fieldset class="inline"><legend>This device is for</legend>
      ${[['athlete', 'an athlete'], ['staff', 'staff'], ['coach', 'a coach']].map(([r, label]) => html`<label class="opt"><input type="radio" name="role" value=${r} checked=${role === r} onChange=${() => setRole(r)} data-testid=${'camp-role-' + r} /> ${label}</label>`)}
    </fieldset>
    ${role === 'athlete' && html`<label for="ja">Athlete</label>
      <select id="ja" data-testid="camp-join-athlete" value=${athlete} onChange=${(e) => setAthlete(e.target.value)}>
        <option value="">Pick the athlete</option>
        ${(athletes || []).map((a) => html`<option value=${a.id}>${a.name}</option>`)}
      </select>
      <p class="muted small">An athlete's phone sees and writes only that athlete's own entries.</p>`}
    <button class="primary" type="button" data-testid="camp-join-make" onClick=${make}>Make a join code</button>
    ${err && html`<p class="error" role="alert" data-testid="camp-join-error">${err}</p>`}
    ${code && html`<div class="joincode" data-testid="camp-join-code">
      <p class="bigcode num" aria-label="Join code" data-testid="camp-join-codetext">${code.code}</p>
      ${qr && html`<img class="qr" src=${qr} width="220" height="220" alt=${'QR code of the join link for code ' + code.code} />`}
      <p class="muted">${left > 0 ? `Valid for ${Math.floor(left / 60)}:${String(left % 60).padStart(2, '0')} more, once.` : 'Expired: make a new code.'}</p>
      <p class="muted small">On the device: open the app at the hub's https address and enter this code, or scan the QR.</p>
    </div>`}
  </section>`;
}

function ago(t) {
  if (!t) return 'never';
  const s = Math.round((Date.now() - new Date(t)) / 1000);
  if (s < 90) return 'just now';
  if (s < 5400) return `${Math.round(s / 60)} min ago`;
  if (s < 129600) return `${Math.round(s / 3600)} h ago`;
  return `${Math.round(s / 86400)} days ago`;
}

function Devices({ athletes, version, onChange }) {
  const [list, setList] = useState(null);
  const [err, setErr] = useState('');
  useEffect(() => {
    hubGet('/api/devices').then((d) => { setList(d.devices); setErr(''); }, (e) => setErr(why(e)));
  }, [version]);
  const names = Object.fromEntries((athletes || []).map((a) => [a.id, a.name]));
  const revoke = async (d) => {
    if (!confirm(`Remove ${d.name} from the camp? It will need a new join code to sync again.`)) return;
    try { await hubPost(`/api/devices/${encodeURIComponent(d.id)}/revoke`); onChange(); } catch (e) { setErr(`Not removed: ${why(e)}`); }
  };
  return html`<section class="card" data-testid="camp-devices">
    <h2>Devices</h2>
    ${err && html`<p class="error" role="alert">${err}</p>`}
    ${list && !list.length && html`<p class="muted">No device has joined yet.</p>`}
    ${list && list.length > 0 && html`<ul class="devices">${list.map((d) => html`<li data-testid=${'camp-device-' + d.id} class=${d.revoked ? 'revoked' : ''}>
      <p><strong>${d.name}</strong> · ${d.role}${d.athlete ? ` · ${names[d.athlete] || 'athlete ' + d.athlete.slice(0, 8)}` : ''}</p>
      <p class="muted small">Last seen ${ago(d.last_seen)} · last sync ${ago(d.last_sync)}${d.waiting > 0 ? html` · <strong>${plural(d.waiting, 'entry', 'entries')} not yet synced</strong>` : ''}${d.revoked ? ' · removed' : ''}</p>
      ${!d.revoked && html`<button class="secondary" type="button" data-testid=${'camp-revoke-' + d.id} onClick=${() => revoke(d)}>Remove</button>`}
    </li>`)}</ul>`}
  </section>`;
}

function Backup() {
  const [state, setState] = useState(null);
  const download = async () => {
    setState({ saved: 'Preparing the backup…' });
    try {
      const blob = await authFetch('/api/backup');
      const a = document.createElement('a');
      a.href = URL.createObjectURL(blob);
      a.download = `cornerbook-backup-${new Date().toISOString().slice(0, 10)}.db`;
      document.body.appendChild(a);
      a.click();
      a.remove();
      setState(savedState(`Backup downloaded (${Math.round(blob.size / 1024)} KiB). Keep a copy off this laptop, e.g. on a USB stick.`));
    } catch (e) { setState({ error: `No backup: ${why(e)}` }); }
  };
  return html`<section class="card" data-testid="camp-backup">
    <h2>Backup</h2>
    <p class="muted">The hub also keeps a daily snapshot of the last 14 days in its data folder.</p>
    <button class="secondary" type="button" data-testid="camp-backup-download" onClick=${download}>Download a backup now</button>
    <${SaveLine} state=${state} />
  </section>`;
}

export function Camp() {
  const athletes = useAthletes();
  const [me, setMe] = useState(null);
  const [err, setErr] = useState('');
  const [version, setVersion] = useState(0);
  useEffect(() => {
    hubGet('/api/me').then(setMe, (e) => setErr(why(e)));
  }, [version]);
  const bump = () => setVersion((v) => v + 1);
  if (err) return html`<section data-testid="screen-camp"><h1>Camp set-up</h1><p class="error" role="alert">Cannot open: ${err}</p></section>`;
  if (!me) return html`<section data-testid="screen-camp"><h1>Camp set-up</h1><p class="muted">Asking the hub…</p></section>`;
  if (me.role !== 'coach') {
    return html`<section data-testid="screen-camp"><h1>Camp set-up</h1>
      <p class="muted">Only a coach's device can set up the camp. This device is ${me.role ? `paired as ${me.role}` : 'not paired yet'}.</p></section>`;
  }
  return html`<section data-testid="screen-camp">
    <h1>Camp set-up</h1>
    ${me.fingerprint && html`<div class="card" data-testid="camp-fingerprint">
      <h2>Camp certificate</h2>
      <p class="muted">Phones check this fingerprint before trusting the hub${me.joinURL ? html` (join page: <strong data-testid="camp-join-url">${me.joinURL}</strong>)` : ''}.</p>
      <p class="fp num">${me.fingerprint}</p>
      ${me.appURL && html`<p>App address: <strong>${me.appURL}</strong></p>`}
    </div>`}
    ${me.laptop && html`<${Passphrase} me=${me} onDone=${bump} />`}
    <${JoinCode} athletes=${athletes} />
    <${Devices} athletes=${athletes} version=${version} onChange=${bump} />
    <${Roster} />
    <${AddAthlete} />
    <div class="card" data-testid="camp-thresholds">
      <h2>Flag thresholds</h2>
      <p class="muted">The whole camp's thresholds for each flag, and its morning check-in hour; a fighter's own, set from their charts, win over them.</p>
      <p><${Link} to="/thresholds?camp=1" class="secondary linkbtn" data-testid="camp-to-thresholds">Camp's flag thresholds</${Link}></p>
    </div>
    <${Backup} />
  </section>`;
}
