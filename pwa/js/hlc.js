// Hybrid logical clock (Kulkarni et al. 2014), the same rules as
// sync/hlc.go. l (Unix ms) and c (counter) stay two numbers: 48 + 16 bits
// do not fit a JavaScript Number exactly.

export function cmpHLC(a, b) {
  if (a.l !== b.l) return a.l < b.l ? -1 : 1;
  if (a.c !== b.c) return a.c < b.c ? -1 : 1;
  return 0;
}

export class Clock {
  constructor(last) {
    this.last = { l: 0, c: 0 };
    if (last) this.restore(last);
  }

  // restore adopts a persisted state if it is later, so the clock never
  // goes backwards across restarts.
  restore(h) {
    if (h && typeof h.l === 'number' && cmpHLC(h, this.last) > 0) this.last = { l: h.l, c: h.c || 0 };
  }

  // now stamps a local or send event at physical time pt (Unix ms).
  now(pt) {
    if (pt > this.last.l) this.last = { l: pt, c: 0 };
    else this.last = { l: this.last.l, c: this.last.c + 1 };
    return { ...this.last };
  }

  // update applies the receive rule for a remote stamp m at physical time pt.
  update(m, pt) {
    const old = this.last;
    const l = Math.max(old.l, m.l, pt);
    let c = 0;
    if (l === old.l && l === m.l) c = Math.max(old.c, m.c) + 1;
    else if (l === old.l) c = old.c + 1;
    else if (l === m.l) c = m.c + 1;
    this.last = { l, c };
    return { ...this.last };
  }
}
