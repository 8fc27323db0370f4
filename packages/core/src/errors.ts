/**
 * Typed errors for bad input. The `code` is the stable API; messages may change.
 * Tests assert `code` and `where`, never message text.
 */
export type ErrorCode =
  | 'FITS_NOT_FITS'
  | 'FITS_NO_END'
  | 'FITS_BAD_CARD'
  | 'FITS_KEYWORD_ORDER'
  | 'FITS_BAD_BITPIX'
  | 'FITS_BAD_NAXIS'
  | 'FITS_BAD_VALUE'
  | 'FITS_TRUNCATED'
  | 'FITS_TOO_LARGE'
  | 'FITS_UNSUPPORTED'
  | 'FITS_COMPRESSED_NOT_DECODED'
  | 'FITS_NO_IMAGE'
  | 'FITS_GZIP'
  | 'INPUT_SHAPE_MISMATCH'
  | 'INPUT_TOO_FEW_PIXELS'
  | 'INPUT_OUT_OF_BOUNDS'
  | 'INPUT_BAD_PARAMETER'
  | 'INPUT_NOT_FOUND'
  | 'INPUT_READ_FAILED'
  | 'FIT_TOO_FEW_POINTS'
  | 'FIT_DEGENERATE'
  // Warning diagnostics raised as errors by strict FITS parsing (same code as the diagnostic).
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
  | 'FITS_BLANK_IN_FLOAT'
  | 'OUTPUT_WRITE_FAILED'
  // Camera characterization: sets that cannot support the measurement.
  | 'INPUT_SCALED_DATA'
  | 'INPUT_NO_BIAS_PAIR'
  | 'INPUT_TOO_FEW_FLAT_PAIRS'
  | 'INPUT_BAD_PROFILE'
  // A result file (JSON) handed to the report that is not a subgauge result, is of an unknown version or lacks a field.
  | 'INPUT_BAD_RESULT';

/** Where in the input a problem sits. `hdu` is 0-based, `card` is 1-based within its HDU, `byte` is a file offset. */
export interface Where {
  file?: string;
  hdu?: number;
  card?: number;
  keyword?: string;
  byte?: number;
}

export class CoreError extends Error {
  readonly code: ErrorCode;
  readonly where: Where;
  constructor(code: ErrorCode, message: string, where: Where = {}, options?: ErrorOptions) {
    super(message, options);
    this.name = new.target.name;
    this.code = code;
    this.where = where;
  }
  /** Plain-object form for JSON output and worker transfer. */
  toJSON(): { name: string; code: ErrorCode; message: string; where: Where } {
    return { name: this.name, code: this.code, message: this.message, where: this.where };
  }
}

/** The bytes are not valid FITS (or break a limit such as `maxPixels`). */
export class FitsFormatError extends CoreError {}
/** Valid FITS, wrong for this measurement. */
export class InvalidInputError extends CoreError {}
/** The data cannot support the fit. */
export class FitError extends CoreError {}

/** Describe `where` as short text: `HDU 0, card 12 (BITPIX), byte 880`. */
export function describeWhere(where: Where): string {
  const parts: string[] = [];
  if (where.hdu !== undefined) parts.push(`HDU ${where.hdu}`);
  if (where.card !== undefined) parts.push(`card ${where.card}${where.keyword ? ` (${where.keyword})` : ''}`);
  else if (where.keyword) parts.push(where.keyword);
  if (where.byte !== undefined) parts.push(`byte ${where.byte}`);
  return parts.join(', ');
}
