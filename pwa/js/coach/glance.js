// The camp at a glance: the coach's home. One row per fighter with the
// day's state as the hub computed it — a stand-down in force, the most
// serious finding, the morning mass against the planned path, and when the
// fighter's phone last synced — each row one tap from that fighter on the
// day board. Loaded only on a coach's or staff device.
import { html, useState, useEffect, Link } from '../ui.js';
import { hubGet, remember, recall, onData } from './api.js';
import { LevelMark, levelWord, mass, query, today, clockOfStamp } from './common.js';
import { incidentWords, dayWords } from '../restrictions.js';

function useGlance(day) {
  const [st, setSt] = useState(() => {
    const c = recall('glance.' + day);
    return { rows: c ? c.data.athletes : null, at: c ? c.at : 0, live: false, error: '' };
  });
  useEffect(() => {
    let alive = true;
    const load = async () => {
      try {
        const d = await hubGet(`/api/glance?day=${encodeURIComponent(day)}`);
        if (!alive) return;
        remember('glance.' + day, d);
        setSt({ rows: d.athletes || [], at: Date.now(), live: true, error: '' });
      } catch (e) {
        if (alive) setSt((o) => ({ ...o, live: false, error: e.message }));
      }
    };
    load();
    const off = onData(load);
    const t = setInterval(load, 60000);
    return () => { alive = false; off(); clearInterval(t); };
  }, [day]);
  return st;
}

// ago: "12 min ago" for an instant.
function ago(at) {
  const t = Date.parse(at || '');
  if (!Number.isFinite(t) || t <= 0) return '';
  const m = Math.max(0, Math.round((Date.now() - t) / 60000));
  if (m < 1) return 'just now';
  if (m < 60) return `${m} min ago`;
  const h = Math.round(m / 60);
  if (h < 48) return `${h} h ago`;
  return `${Math.round(h / 24)} days ago`;
}

function massWords(g) {
  if (g.trend_kg == null && g.mass_kg == null) return { text: 'No morning mass yet', level: '' };
  const now = g.trend_kg != null ? g.trend_kg : g.mass_kg;
  const head = `${g.trend_kg != null ? 'trend' : 'mass'} ${mass(now, g.units)}`;
  if (g.path_kg == null) return { text: `${head}; no planned path`, level: '' };
  const d = now - g.path_kg;
  const pct = g.limit_kg ? (d / g.limit_kg) * 100 : null;
  const side = Math.abs(d) < 0.05 ? 'on the path' : `${mass(Math.abs(d), g.units)} ${d > 0 ? 'above' : 'below'} the path`;
  return { text: `${head}, ${side}${pct != null && d > 0 ? ` (${pct.toFixed(1)} % of the limit)` : ''}`, level: d > 0 && pct != null && pct > 1 ? 'over' : '' };
}

function phoneWords(g) {
  if (!g.phones || !g.phones.length) return 'No phone paired';
  const p = g.phones[0];
  const when = ago(p.last_sync);
  return `${when ? `Phone synced ${when}` : 'Phone not synced yet'}${p.waiting > 0 ? ` · ${p.waiting} waiting on it` : ''}`;
}

export function CampGlance({ rows: expected }) {
  const day = today();
  const st = useGlance(day);
  const wait = st.rows === null;
  return html`<section class="camp-glance" data-testid="home-glance" aria-labelledby="glance-h" data-ready=${wait ? 'false' : 'true'}
      style=${`min-height: ${wait ? Math.max(1, expected || 1) * 64 + 60 : 0}px`}>
    <h1 id="glance-h">The camp today <span class="h1day">${dayWords(day)}${st.at ? ` · as of ${clockOfStamp(new Date(st.at).toISOString())}` : ''}</span></h1>
    ${wait && !st.error && html`<p class="muted" data-testid="home-glance-wait">Asking the hub for the camp's day…</p>`}
    ${wait && st.error && html`<p class="muted" data-testid="home-glance-error">The camp's day comes from the hub on the camp laptop (${st.error}).</p>`}
    ${!wait && !st.live && st.error && html`<p class="fresh warn">Last copy from the hub: ${st.error}.</p>`}
    ${!wait && html`<ul class="glance-list">
      ${st.rows.map((g) => {
        const m = massWords(g);
        const r = g.restrictions[0];
        return html`<li><${Link} to=${query('/review', { athlete: g.athlete, day })} class="glance-row" data-testid=${`glance-${g.athlete}`} data-held=${g.restrictions.length ? 'true' : 'false'}>
          <strong class="glance-name">${g.name}</strong>
          <span class="glance-cell glance-rx" data-testid="glance-restriction">${r ? html`<span class="rx-mark" aria-hidden="true"></span>Stand-down: ${incidentWords(r.incident_type).toLowerCase()} on ${dayWords(r.started_day)}` : 'No stand-down'}</span>
          <span class="glance-cell" data-testid="glance-worst">${g.worst ? html`<${LevelMark} level=${g.worst.level} /> ${levelWord(g.worst.level)}: ${g.worst.title}${g.raised > 1 ? ` (+${g.raised - 1} more)` : ''}${g.worst.decided ? ' · decided' : ''}` : g.forming ? 'Nothing raised; some rules need more data' : 'Nothing raised'}</span>
          <span class=${`glance-cell ${m.level}`} data-testid="glance-mass">${m.text}</span>
          <span class="glance-cell muted" data-testid="glance-phone">${phoneWords(g)}</span>
        </${Link}></li>`;
      })}
    </ul>`}
  </section>`;
}
