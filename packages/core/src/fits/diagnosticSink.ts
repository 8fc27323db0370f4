import type { Diagnostic, DiagnosticCode } from '../diagnostics.js';
import { FitsFormatError } from '../errors.js';
import type { ErrorCode, Where } from '../errors.js';

/**
 * Collects diagnostics while reading; in strict mode a warning becomes a FitsFormatError with the
 * same code (astropy's verify "exception" level, as data otherwise).
 */
export class DiagnosticSink {
  readonly list: Diagnostic[] = [];
  constructor(
    readonly strict: boolean,
    readonly file: string | undefined,
  ) {}

  /** Location with the file name added when one is known. */
  where(where: Where): Where {
    return this.file === undefined ? where : { file: this.file, ...where };
  }

  warn(code: DiagnosticCode & ErrorCode, message: string, where: Where): void {
    const w = this.where(where);
    if (this.strict) throw new FitsFormatError(code, message, w);
    this.list.push({ code, severity: 'warning', message, where: w });
  }

  info(code: DiagnosticCode, message: string, where: Where): void {
    this.list.push({ code, severity: 'info', message, where: this.where(where) });
  }

  error(code: ErrorCode, message: string, where: Where): FitsFormatError {
    return new FitsFormatError(code, message, this.where(where));
  }
}
