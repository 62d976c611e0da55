// UUIDv7 (RFC 9562 §5.7): 48-bit big-endian Unix milliseconds, version 7,
// 12 random bits, variant 10, 62 random bits. Uses crypto.getRandomValues,
// which exists outside secure contexts too (crypto.randomUUID does not, and
// is v4 only).
export function uuidv7(ms = Date.now(), rand = crypto.getRandomValues(new Uint8Array(16))) {
  const b = new Uint8Array(16);
  b.set(rand.subarray(0, 16));
  let t = Math.floor(ms);
  for (let i = 5; i >= 0; i--) {
    b[i] = t % 256;
    t = Math.floor(t / 256);
  }
  b[6] = 0x70 | (b[6] & 0x0f); // version 7
  b[8] = 0x80 | (b[8] & 0x3f); // variant 10
  const h = Array.from(b, (x) => x.toString(16).padStart(2, '0')).join('');
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}

// uuidTime returns the Unix milliseconds a UUIDv7 carries.
export function uuidTime(id) {
  return parseInt(id.replace(/-/g, '').slice(0, 12), 16);
}
