import type { Where } from './errors.js';

/** Stable codes for tolerable problems; `strict` parsing turns `warning`s into errors. */
export type DiagnosticCode =
  | 'FITS_DUPLICATE_KEYWORD'
  | 'FITS_LOWERCASE_KEYWORD'
  | 'FITS_NONSTANDARD_CARD'
  | 'FITS_ILLEGAL_CHARACTER'
  | 'FITS_SHORT_LAST_BLOCK'
  | 'FITS_NONZERO_PADDING'
  | 'FITS_TRAILING_BYTES'
  | 'FITS_BAD_EXTENSION'
  | 'FITS_CHECKSUM_MISMATCH'
  | 'FITS_DATASUM_MISMATCH'
  | 'FITS_UNSIGNED_WITHOUT_BZERO'
  | 'FITS_BLANK_IN_FLOAT'
  | 'FITS_MISSING_EXTEND'
  | 'FITS_FREE_FORMAT_MANDATORY'
  | 'FITS_SKIPPED_HDU'
  | 'STARS_MANY_PIXELS_ABOVE_THRESHOLD'
  | 'STARS_TOO_LARGE_COMPONENTS'
  | 'STARS_SOURCE_LIMIT'
  | 'TRAILS_NOISY_MASK'
  | (string & {});

export interface Diagnostic {
  code: DiagnosticCode;
  severity: 'info' | 'warning';
  message: string;
  where: Where;
}
