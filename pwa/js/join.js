// Join: pair this device with the camp's hub using the code (or QR link)
// from the coach's screen.
import { html, useState, useAsync, navigate, setPicked } from './ui.js';
import { getMeta } from './db.js';
import { join, requestSync, HubError } from './sync.js';

export function Join() {
  const params = new URLSearchParams(location.search);
  const [code, setCode] = useState(params.get('code') || '');
  const [name, setName] = useState('');
  const [state, setState] = useState(null);
  const paired = useAsync(() => getMeta('token'), [state && state.done], null);

  const submit = async (e) => {
    e.preventDefault();
    if (!code.trim()) return setState({ error: 'Type the join code shown on the coach\'s screen.' });
    if (!name.trim()) return setState({ error: 'Give this device a name the coach will recognise, e.g. "Ana\'s phone".' });
    setState({ busy: true });
    try {
      const res = await join(code, name);
      if (res.device && res.device.athlete) setPicked(res.device.athlete);
      setState({ done: true, message: res.message || 'This device has joined the camp.' });
      requestSync('joined');
      // A device joined as staff keeps every coach screen for offline use
      // from now on, not only from its next start.
      const role = res.device && res.device.role;
      if ((role === 'coach' || role === 'staff') && 'serviceWorker' in navigator) {
        navigator.serviceWorker.ready.then((reg) => reg.active && reg.active.postMessage({ type: 'WARM' })).catch(() => {});
      }
    } catch (err) {
      const why = err instanceof HubError ? err.message : 'The hub could not be reached. Join on the camp Wi-Fi, at the hub\'s https address.';
      setState({ error: `Not joined: ${why}` });
    }
  };

  if (state && state.done) {
    return html`<section data-testid="screen-join">
      <h1>Joined</h1>
      <p class="saved" data-testid="join-done">${state.message}</p>
      <button class="primary" type="button" data-testid="join-continue" onClick=${() => navigate('/', true)}>Start logging</button>
    </section>`;
  }
  return html`<form onSubmit=${submit} data-testid="screen-join" novalidate>
    <h1>Join the camp</h1>
    ${paired && html`<p class="muted" data-testid="join-already">This device is already paired. Joining again replaces its pass.</p>`}
    <label for="join-code">Join code</label>
    <input id="join-code" data-testid="join-code" autocomplete="off" autocapitalize="characters" value=${code} onInput=${(e) => setCode(e.target.value)} />
    <label for="join-name">Name of this device</label>
    <input id="join-name" data-testid="join-name" value=${name} placeholder="e.g. Ana's phone" onInput=${(e) => setName(e.target.value)} />
    <button class="primary" type="submit" data-testid="join-submit" disabled=${state && state.busy}>Join</button>
    ${state && state.error && html`<p class="error" role="alert" data-testid="join-error">${state.error}</p>`}
    <p class="muted small">Entries already made on this device are kept and sent once it has joined.</p>
  </form>`;
}
