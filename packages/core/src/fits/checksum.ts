// CHECKSUM / DATASUM convention: Seaman, Pence & Rots, "FITS Checksum Proposal" (arXiv:1201.1345);
// REFERENCE A.8.3 has the algorithm and check values.
import { HOST_LITTLE_ENDIAN } from './decode.js';

const M32 = 0xffffffff;
const M32N = 0xffffffffn;

/**
 * Ones'-complement addition of two 32-bit sums: add, then fold the carry back in (end-around carry).
 *
 * @example onesComplementAdd(0xffffffff, 1) // 1
 */
export function onesComplementAdd(a: number, b: number): number {
  const s = a + b;
  return s > M32 ? s - M32 : s;
}

/**
 * 32-bit ones'-complement sum of big-endian words (FITS Checksum Proposal, REFERENCE A.8.3 step 1).
 * A length that is not a multiple of 4 is treated as padded with zero bytes.
 *
 * Method: instead of reading each big-endian word, sum two lanes of a host-order 32-bit view
 * (bytes 0 and 2, bytes 1 and 3) exactly in float64; modulo 2^32 - 1, 2^32 = 1, so the sum is
 * 2^24 x lane0 + 2^16 x lane1. The result is 0 only when every word is 0, else in 1 ... 0xFFFFFFFF,
 * exactly as the carry-folding loop gives.
 *
 * @param bytes - the bytes to sum (usually whole 2880-byte blocks).
 * @param initialSum - a sum to continue from (default 0), so header and data sums can be chained.
 * @returns the sum, an unsigned 32-bit integer.
 * @example onesComplementSum(new Uint8Array(2880).fill(0xff)) // 0xffffffff
 */
export function onesComplementSum(bytes: Uint8Array, initialSum = 0): number {
  const n = bytes.length;
  const words = Math.floor(n / 4);
  let total = 0n;
  let any = false;
  // Chunks keep the float64 lane sums exact (each word adds < 2^24 to a lane).
  const CHUNK = 1 << 24;
  const aligned = HOST_LITTLE_ENDIAN && bytes.byteOffset % 4 === 0;
  for (let start = 0; start < words; start += CHUNK) {
    const end = Math.min(words, start + CHUNK);
    let lane0 = 0;
    let lane1 = 0;
    if (aligned) {
      const u = new Uint32Array(bytes.buffer, bytes.byteOffset + start * 4, end - start);
      for (let i = 0; i < u.length; i++) {
        const w = u[i]!;
        lane0 += w & 0x00ff00ff;
        lane1 += (w >>> 8) & 0x00ff00ff;
      }
    } else {
      for (let i = start * 4; i < end * 4; i += 4) {
        lane0 += bytes[i]! + (bytes[i + 2]! << 16);
        lane1 += bytes[i + 1]! + (bytes[i + 3]! << 16);
      }
    }
    if (lane0 !== 0 || lane1 !== 0) {
      any = true;
      total = (total + BigInt(lane0) * 0x1000000n + BigInt(lane1) * 0x10000n) % M32N;
    }
  }
  const rest = n - words * 4;
  if (rest > 0) {
    let w = 0;
    for (let k = 0; k < 4; k++) w = w * 256 + (k < rest ? bytes[words * 4 + k]! : 0);
    if (w !== 0) {
      any = true;
      total = (total + BigInt(w)) % M32N;
    }
  }
  const sum = any ? (total === 0n ? M32 : Number(total)) : 0;
  return onesComplementAdd(initialSum >>> 0, sum);
}

const EXCLUDED = (c: number): boolean => (c >= 0x3a && c <= 0x40) || (c >= 0x5b && c <= 0x60);

/**
 * ASCII-encode a 32-bit checksum as 16 alphanumeric characters (FITS Checksum Proposal, "Encoding";
 * REFERENCE A.8.3). By default encodes the complement of `sum`, which is what the CHECKSUM card holds.
 *
 * @param sum - the ones'-complement sum of the HDU with CHECKSUM set to 16 zeros.
 * @param complement - encode `~sum` (default true); false encodes `sum` itself.
 * @returns the 16-character CHECKSUM value.
 * @example encodeChecksum(868229149) // 'hcHjjc9ghcEghc9g' (the proposal's example)
 */
export function encodeChecksum(sum: number, complement = true): string {
  const v = (complement ? ~sum : sum) >>> 0;
  const asc = new Array<number>(16);
  for (let i = 0; i < 4; i++) {
    const b = (v >>> (24 - 8 * i)) & 0xff;
    const q = (b >> 2) + 0x30;
    const ch = [q + (b & 3), q, q, q];
    // Shift pairs apart until no character is punctuation, keeping their sum.
    for (let j = 0; j < 4; j += 2) {
      while (EXCLUDED(ch[j]!) || EXCLUDED(ch[j + 1]!)) {
        ch[j] = ch[j]! + 1;
        ch[j + 1] = ch[j + 1]! - 1;
      }
    }
    for (let j = 0; j < 4; j++) asc[4 * j + i] = ch[j]!;
  }
  // Rotate right by one so the encoding lines up with a value starting in byte 12 of the card.
  const rotated = [asc[15]!, ...asc.slice(0, 15)];
  return String.fromCharCode(...rotated);
}

/**
 * DATASUM of a data unit: the ones'-complement sum of its bytes (including the zero padding) as the
 * unsigned decimal string the DATASUM card holds (REFERENCE A.8.3 step 2).
 *
 * @example datasumOf(data) // '160565700' for 10 x 10 int16 0..99 (REFERENCE G row 17)
 */
export function datasumOf(data: Uint8Array): string {
  return String(onesComplementSum(data));
}
