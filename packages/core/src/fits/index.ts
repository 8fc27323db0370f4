// Public API of the fits area; re-exports only.
export type * from './types.js';
export { parseFits, imageHdus } from './parse.js';
export { parseHeaderBlocks, FitsHeader } from './header.js';
export type { HeaderBlockOptions } from './header.js';
export { parseCard } from './card.js';
export { encodeFits, formatCard, formatCards } from './write.js';
export { onesComplementSum, onesComplementAdd, encodeChecksum, datasumOf } from './checksum.js';
export { BLOCK_BYTES, CARD_BYTES, DEFAULT_MAX_PIXELS, paddedLength } from './constants.js';
export { readFitsDate } from './dates.js';
export type { FitsDate } from './dates.js';
export { tileDitherRandoms } from './dither.js';
