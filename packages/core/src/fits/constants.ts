/** FITS block length in bytes: 36 cards of 80 bytes (FITS 3.0 §3.1). */
export const BLOCK_BYTES = 2880;
/** Length of one keyword record ("card") in bytes (FITS 3.0 §4.1). */
export const CARD_BYTES = 80;
/** Cards per block. */
export const CARDS_PER_BLOCK = 36;
/** Default `maxPixels`: 400 million pixels (DESIGN.md §5, `--max-pixels`). */
export const DEFAULT_MAX_PIXELS = 400e6;
/** The legal BITPIX values (FITS 3.0 Table 4.6; 64 since 3.0). */
export const LEGAL_BITPIX: readonly number[] = [8, 16, 32, 64, -32, -64];

/** Round a byte count up to whole 2880-byte blocks (FITS 3.0 §3.3.2). */
export function paddedLength(bytes: number): number {
  return Math.ceil(bytes / BLOCK_BYTES) * BLOCK_BYTES;
}
