// Test-only helpers: build FITS bytes card by card (no dependence on the writer under test).
export const BLOCK = 2880;

/** Pad each card to 80 characters, add END, pad the header to whole blocks with spaces. */
export function headerBytes(cards: string[], end = true): Uint8Array {
  const text = [...cards, ...(end ? ['END'] : [])].map((c) => c.padEnd(80)).join('');
  const n = Math.ceil(text.length / BLOCK) * BLOCK;
  const out = new Uint8Array(n).fill(0x20);
  for (let i = 0; i < text.length; i++) out[i] = text.charCodeAt(i);
  return out;
}

/** Big-endian data bytes padded with zeros to whole blocks. */
export function dataBytes(hex: string | Uint8Array, pad = true): Uint8Array {
  const raw = typeof hex === 'string' ? Uint8Array.from(hex.match(/../g) ?? [], (h) => parseInt(h, 16)) : hex;
  const out = new Uint8Array(pad ? Math.ceil(raw.length / BLOCK) * BLOCK : raw.length);
  out.set(raw);
  return out;
}

export function concat(...parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

/** A primary image HDU: mandatory cards, then `extra`, then the data. */
export function imageFile(bitpix: number, axes: number[], data: string | Uint8Array, extra: string[] = []): Uint8Array {
  const cards = [
    'SIMPLE  =                    T',
    `BITPIX  = ${String(bitpix).padStart(20)}`,
    `NAXIS   = ${String(axes.length).padStart(20)}`,
    ...axes.map((n, i) => `${`NAXIS${i + 1}`.padEnd(8)}= ${String(n).padStart(20)}`),
    ...extra,
  ];
  return concat(headerBytes(cards), dataBytes(data));
}

/** Captures a thrown error for code/where assertions. */
export function thrown(f: () => unknown): unknown {
  try {
    f();
  } catch (e) {
    return e;
  }
  throw new Error('expected the call to throw');
}

export function hex(bytes: Uint8Array): string {
  return Array.from(bytes, (b) => b.toString(16).padStart(2, '0')).join('');
}

/** Seeded bytes (xorshift32) for data regions. */
export function seededBytes(n: number, seed: number): Uint8Array {
  const out = new Uint8Array(n);
  let s = seed >>> 0 || 1;
  for (let i = 0; i < n; i++) {
    s ^= s << 13;
    s ^= s >>> 17;
    s ^= s << 5;
    out[i] = s & 0xff;
  }
  return out;
}
