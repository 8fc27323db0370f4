import { InvalidInputError } from '../errors.js';
import type { CardValue, Pixels } from '../fits/types.js';
import type { FrameView } from './view.js';
import { steppedView } from './view.js';

/** The four 2x2 colour-filter-array layouts, named by the top-left cell read left to right, top row first. */
export type CfaPatternName = 'RGGB' | 'GRBG' | 'GBRG' | 'BGGR';

/** Position of one colour inside the 2x2 cell: column (dx) and row (dy) parity in the pixel array. */
export interface CfaCellOffset {
  dx: 0 | 1;
  dy: 0 | 1;
}

/**
 * A CFA layout expressed in the pixel array's own order (row 0 = first row stored in the file, x = NAXIS1).
 * `g1` is the green on the red row, `g2` the green on the blue row.
 */
export interface CfaPattern {
  /** Layout of the 2x2 cell whose top-left is pixel (0, 0) of the stored array. */
  name: CfaPatternName;
  r: CfaCellOffset;
  g1: CfaCellOffset;
  g2: CfaCellOffset;
  b: CfaCellOffset;
  /** Pattern string as found in the header (trimmed, upper case). */
  headerPattern: CfaPatternName;
  /** Column and row shifts applied (XBAYROFF, YBAYROFF modulo 2) and whether a BOTTOM-UP row order flipped the rows. */
  xShift: 0 | 1;
  yShift: 0 | 1;
  rowsFlipped: boolean;
}

/**
 * Header values that describe a CFA layout: either a header (anything with `get(keyword)`) or a plain
 * record keyed by FITS keyword (`BAYERPAT`, `COLORTYP`, `ROWORDER`, `XBAYROFF`, `YBAYROFF`).
 */
export type CfaHeaderSource =
  | { get(keyword: string): CardValue | undefined }
  | Readonly<Record<string, CardValue | undefined>>;

const NAMES: readonly CfaPatternName[] = ['RGGB', 'GRBG', 'GBRG', 'BGGR'];
/** Values meaning "no CFA" (common practice in writers that always emit the keyword). */
const MONO = new Set(['', 'MONO', 'NONE', 'GRAY', 'GREY', 'L', 'LUM']);

function lookup(source: CfaHeaderSource, keyword: string): CardValue | undefined {
  const getter = (source as { get?: unknown }).get;
  if (typeof getter === 'function') return (source as { get(k: string): CardValue | undefined }).get(keyword);
  return (source as Readonly<Record<string, CardValue | undefined>>)[keyword];
}

function integerShift(value: CardValue | undefined, keyword: string): 0 | 1 {
  if (value === undefined || value === null) return 0;
  const n = typeof value === 'bigint' ? Number(value % 2n) : typeof value === 'string' ? Number(value.trim()) : value;
  if (typeof n !== 'number' || !Number.isInteger(n)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `${keyword} must be an integer`, { keyword });
  }
  return (((n % 2) + 2) % 2) as 0 | 1;
}

/**
 * Read the CFA layout from header values and express it in stored-array order.
 *
 * Convention (chosen here; REFERENCE A.9 and F.4 say only that origin and row order matter):
 * - `BAYERPAT` (or `COLORTYP` when `BAYERPAT` is absent) names the 2x2 cell at the image origin when the
 *   image is read top-down, the way sensors read out and capture programs display.
 * - `XBAYROFF`/`YBAYROFF` say where the image origin sits inside that pattern: the stored pixel (x, y) has
 *   the colour of pattern cell ((x + XBAYROFF) mod 2, (y + YBAYROFF) mod 2). An odd crop offset shifts the
 *   pattern this way.
 * - `ROWORDER = 'BOTTOM-UP'` means the stored rows run in the opposite order to the one the pattern was
 *   named in, so the row parity flips (RGGB becomes GBRG, REFERENCE F.4). The flip does not depend on the
 *   frame height: writers flip whole sensor frames, whose heights are even, so a parity flip is the exact
 *   mapping for them; applying it after the offsets keeps the offsets in the pattern's own (top-down) frame.
 *
 * @param source header or keyword record
 * @returns the layout, or undefined when no CFA keyword is present or it names a monochrome sensor
 * @throws InvalidInputError `INPUT_BAD_PARAMETER` (with `where.keyword`) for a pattern string that is none of
 *   RGGB, GRBG, GBRG, BGGR, or a non-integer offset
 * @example cfaPattern({ BAYERPAT: 'RGGB', ROWORDER: 'BOTTOM-UP' })?.name // 'GBRG'
 */
export function cfaPattern(source: CfaHeaderSource): CfaPattern | undefined {
  let keyword = 'BAYERPAT';
  let raw = lookup(source, 'BAYERPAT');
  if (raw === undefined || raw === null) {
    keyword = 'COLORTYP';
    raw = lookup(source, 'COLORTYP');
  }
  if (raw === undefined || raw === null) return undefined;
  const text = String(raw).trim().toUpperCase();
  if (MONO.has(text)) return undefined;
  if (!(NAMES as readonly string[]).includes(text)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', `${keyword} '${text}' is not one of ${NAMES.join(', ')}`, {
      keyword,
    });
  }
  const headerPattern = text as CfaPatternName;
  const xShift = integerShift(lookup(source, 'XBAYROFF'), 'XBAYROFF');
  const yShift = integerShift(lookup(source, 'YBAYROFF'), 'YBAYROFF');
  const order = lookup(source, 'ROWORDER');
  const rowsFlipped = typeof order === 'string' && order.trim().toUpperCase() === 'BOTTOM-UP';
  // Stored pixel (x, y) has header-pattern cell (cx, cy) = ((x + xShift) % 2, (y + yShift + flip) % 2).
  const cy0 = ((yShift + (rowsFlipped ? 1 : 0)) % 2) as 0 | 1;
  const cx0 = xShift;
  let name = '';
  for (let y = 0; y < 2; y++) {
    for (let x = 0; x < 2; x++) {
      name += headerPattern[((y + cy0) % 2) * 2 + ((x + cx0) % 2)];
    }
  }
  const stored = name as CfaPatternName;
  const find = (colour: 'R' | 'B'): CfaCellOffset => {
    const i = stored.indexOf(colour);
    return { dx: (i % 2) as 0 | 1, dy: (i >> 1) as 0 | 1 };
  };
  const r = find('R');
  const b = find('B');
  return {
    name: stored,
    r,
    g1: { dx: b.dx, dy: r.dy },
    g2: { dx: r.dx, dy: b.dy },
    b,
    headerPattern,
    xShift,
    yShift: yShift,
    rowsFlipped,
  };
}

/** The four colour sub-planes of a CFA view, each an O(1) strided view (step 2 in x and y). */
export interface CfaPlanes<T extends Pixels = Pixels> {
  r: FrameView<T>;
  /** Green on the red row. */
  g1: FrameView<T>;
  /** Green on the blue row. */
  g2: FrameView<T>;
  b: FrameView<T>;
}

/**
 * Split a CFA view into its four colour planes without copying (REFERENCE F.4: measure each sub-plane).
 * The cell offsets are taken relative to the view's own origin, so pass the pattern of the frame and a view
 * that starts at an even pixel, or a pattern re-expressed for the view's origin ({@link cfaPatternAt}).
 * For odd widths or heights the planes starting at offset 0 are one pixel longer than those at offset 1.
 * @example const { r, g1, g2, b } = cfaPlanes(frameView(image), pattern)
 */
export function cfaPlanes<T extends Pixels>(view: FrameView<T>, pattern: CfaPattern): CfaPlanes<T> {
  const plane = (o: CfaCellOffset) => steppedView(view, o.dx, o.dy, 2, 2);
  return { r: plane(pattern.r), g1: plane(pattern.g1), g2: plane(pattern.g2), b: plane(pattern.b) };
}

/**
 * The same layout seen from pixel (x, y) of the frame, e.g. for a region that starts at odd coordinates.
 * @example cfaPatternAt(cfaPattern({ BAYERPAT: 'RGGB' })!, 1, 0).name // 'GRBG'
 */
export function cfaPatternAt(pattern: CfaPattern, x: number, y: number): CfaPattern {
  const px = ((x % 2) + 2) % 2;
  const py = ((y % 2) + 2) % 2;
  const shift = (o: CfaCellOffset): CfaCellOffset => ({
    dx: ((o.dx + px) % 2) as 0 | 1,
    dy: ((o.dy + py) % 2) as 0 | 1,
  });
  const r = shift(pattern.r);
  const g1 = shift(pattern.g1);
  const g2 = shift(pattern.g2);
  const b = shift(pattern.b);
  const cell = ['', '', '', ''];
  cell[r.dy * 2 + r.dx] = 'R';
  cell[g1.dy * 2 + g1.dx] = 'G';
  cell[g2.dy * 2 + g2.dx] = 'G';
  cell[b.dy * 2 + b.dx] = 'B';
  return { ...pattern, name: cell.join('') as CfaPatternName, r, g1, g2, b };
}
