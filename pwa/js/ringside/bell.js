// The ringside bell, synthesised with WebAudio (no sound files): a struck
// bell is a few inharmonic partials that die away, the high ones first.
// Round start: one strike. Round end: three quick strikes. Ten seconds
// before the end of a round or a rest: three short pips.
let ac = null;
export const rung = { last: '', count: 0 };

function audio() {
  const AC = typeof window !== 'undefined' && (window.AudioContext || window.webkitAudioContext);
  if (!AC) return null;
  if (!ac) {
    try { ac = new AC(); } catch (_) { return null; }
  }
  if (ac.state === 'suspended') ac.resume().catch(() => {});
  return ac;
}

// unlock is called from a tap, so the browser lets the page make sound later.
export function unlock() { audio(); }

// Partial ratios and levels of a bell-like struck tone (a church-bell
// series, approximately: hum, prime, tierce, quint, nominal); any set of
// non-integer ratios reads as a bell, these were chosen by ear.
const PARTIALS = [[0.5, 0.35], [1, 1], [1.19, 0.45], [1.5, 0.3], [2, 0.5], [2.74, 0.25], [4.1, 0.12]];

function strike(a, t0, f, dur, level) {
  const out = a.createGain();
  out.gain.value = level;
  out.connect(a.destination);
  for (const [r, amp] of PARTIALS) {
    const o = a.createOscillator();
    o.type = 'sine';
    o.frequency.value = f * r;
    const g = a.createGain();
    const d = dur / Math.sqrt(r); // high partials decay faster
    g.gain.setValueAtTime(0.0001, t0);
    g.gain.exponentialRampToValueAtTime(amp, t0 + 0.004);
    g.gain.exponentialRampToValueAtTime(0.0001, t0 + d);
    o.connect(g);
    g.connect(out);
    o.start(t0);
    o.stop(t0 + d + 0.05);
  }
}

function pip(a, t0) {
  const o = a.createOscillator();
  o.type = 'square';
  o.frequency.value = 1760;
  const g = a.createGain();
  g.gain.setValueAtTime(0.0001, t0);
  g.gain.exponentialRampToValueAtTime(0.35, t0 + 0.005);
  g.gain.exponentialRampToValueAtTime(0.0001, t0 + 0.09);
  o.connect(g);
  g.connect(a.destination);
  o.start(t0);
  o.stop(t0 + 0.12);
}

// ring plays one of "start", "end", "warn"; it returns whether sound could
// be made (a page never tapped may not play sound).
export function ring(kind) {
  rung.last = kind;
  rung.count++;
  const a = audio();
  if (!a) return false;
  const t = a.currentTime + 0.02;
  if (kind === 'start') strike(a, t, 880, 2.2, 0.5);
  else if (kind === 'end') { for (let i = 0; i < 3; i++) strike(a, t + i * 0.42, 880, 1.6, 0.5); }
  else if (kind === 'warn') { for (let i = 0; i < 3; i++) pip(a, t + i * 0.16); }
  return a.state === 'running';
}
