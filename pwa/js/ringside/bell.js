// The ringside bell, synthesised with WebAudio (no sound files): a struck
// bell is a few inharmonic partials that die away, the high ones first.
// Round start: one strike. Round end: three quick strikes. Ten seconds
// before the end of a round or a rest: three short pips.
let ac = null;
let bus = null; // a compressor in front of the speaker: loud without clipping
export const rung = { last: '', count: 0 };

function audio() {
  const AC = typeof window !== 'undefined' && (window.AudioContext || window.webkitAudioContext);
  if (!AC) return null;
  if (!ac) {
    try { ac = new AC(); } catch (_) { return null; }
  }
  if (!bus) bus = compressor(ac);
  if (ac.state === 'suspended') ac.resume().catch(() => {});
  return ac;
}

// unlock is called from a tap, so the browser lets the page make sound later.
export function unlock() { audio(); }

// Partial ratios and levels of a bell-like struck tone: the usual
// church-bell partials hum 0.5, prime 1, tierce 1.19, quint 1.5, nominal 2
// (ratios recalled from memory), plus two high ones and all the levels
// chosen by ear.
const PARTIALS = [[0.5, 0.35], [1, 1], [1.19, 0.45], [1.5, 0.3], [2, 0.5], [2.74, 0.25], [4.1, 0.12]];

function strike(a, dest, t0, f, dur, level) {
  const out = a.createGain();
  out.gain.value = level;
  out.connect(dest);
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

function pip(a, dest, t0) {
  const o = a.createOscillator();
  o.type = 'square';
  o.frequency.value = 1760;
  const g = a.createGain();
  g.gain.setValueAtTime(0.0001, t0);
  g.gain.exponentialRampToValueAtTime(0.35, t0 + 0.005);
  g.gain.exponentialRampToValueAtTime(0.0001, t0 + 0.09);
  o.connect(g);
  g.connect(dest);
  o.start(t0);
  o.stop(t0 + 0.12);
}

function compressor(a) {
  const c = a.createDynamicsCompressor();
  c.threshold.value = -12;
  c.ratio.value = 8;
  c.connect(a.destination);
  return c;
}

function play(a, dest, kind, t) {
  if (kind === 'start') strike(a, dest, t, 880, 2.2, 0.34);
  else if (kind === 'end') { for (let i = 0; i < 3; i++) strike(a, dest, t + i * 0.42, 880, 1.6, 0.34); }
  else if (kind === 'warn') { for (let i = 0; i < 3; i++) pip(a, dest, t + i * 0.16); }
}

// render plays a sound into an OfflineAudioContext and returns its samples
// (for tests: the bell is audible, does not clip, and dies away).
export async function render(kind, seconds = 2.5, rate = 22050) {
  const a = new OfflineAudioContext(1, Math.round(seconds * rate), rate);
  play(a, compressor(a), kind, 0.01);
  const buf = await a.startRendering();
  return buf.getChannelData(0);
}

// ring plays one of "start", "end", "warn"; it returns whether sound could
// be made (a page never tapped may not play sound).
export function ring(kind) {
  rung.last = kind;
  rung.count++;
  const a = audio();
  if (!a) return false;
  play(a, bus, kind, a.currentTime + 0.02);
  return a.state === 'running';
}
