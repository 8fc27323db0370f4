/**
 * Series colours: the Okabe-Ito palette (M. Okabe and K. Ito, "Color Universal Design (CUD): how to make figures
 * and presentations that are friendly to colorblind people", 2008; hex values as commonly quoted, recalled from
 * memory). Every series that tells categories apart also differs in marker shape or dash, so colour is never the
 * only cue.
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** A palette colour by name; `ink` is black on light pages and near-white on dark ones, `grey` a neutral. */
export type ColorName = keyof typeof OKABE_ITO | 'ink' | 'grey';

/** Marker shapes (d3-shape symbol types). */
export type MarkerShape = 'circle' | 'square' | 'triangle' | 'diamond' | 'cross' | 'times' | 'star' | 'wye';

/** Colours and shapes in the order categories (filters, temperatures) get them; yellow is left out (low contrast on white). */
export const CATEGORY_STYLES: readonly { color: ColorName; marker: MarkerShape }[] = [
  { color: 'blue', marker: 'circle' },
  { color: 'vermillion', marker: 'square' },
  { color: 'bluishGreen', marker: 'triangle' },
  { color: 'reddishPurple', marker: 'diamond' },
  { color: 'orange', marker: 'wye' },
  { color: 'skyBlue', marker: 'star' },
  { color: 'ink', marker: 'cross' },
];

/** The style of the i-th category (cycles). */
export function categoryStyle(i: number): { color: ColorName; marker: MarkerShape } {
  return CATEGORY_STYLES[((i % CATEGORY_STYLES.length) + CATEGORY_STYLES.length) % CATEGORY_STYLES.length]!;
}

/** Audit verdicts: shape and colour both differ (keep ● green, review ▲ orange, reject ✕ vermillion). */
export const VERDICT_STYLES = {
  keep: { color: 'bluishGreen', marker: 'circle', symbol: '\u25cf' },
  review: { color: 'orange', marker: 'triangle', symbol: '\u25b2' },
  reject: { color: 'vermillion', marker: 'times', symbol: '\u2715' },
} as const satisfies Record<string, { color: ColorName; marker: MarkerShape; symbol: string }>;

/** CFA channels: colour named after the channel where the palette allows, and a distinct shape each. */
export const CHANNEL_STYLES: Readonly<Record<string, { color: ColorName; marker: MarkerShape }>> = {
  R: { color: 'vermillion', marker: 'square' },
  G1: { color: 'bluishGreen', marker: 'circle' },
  G2: { color: 'ink', marker: 'triangle' },
  B: { color: 'blue', marker: 'diamond' },
};

/**
 * Sequential colour map for the background map: viridis (S. van der Walt and N. Smith, matplotlib 2.0 default,
 * 2015), perceptually uniform and readable with colour-vision deficiencies; nine anchor colours recalled from memory,
 * interpolated linearly in sRGB.
 */
const VIRIDIS = ['#440154', '#472d7b', '#3b528b', '#2c728e', '#21918c', '#28ae80', '#5ec962', '#addc30', '#fde725'];

/** Viridis colour for t in [0, 1] (clamped) as `#rrggbb`. */
export function viridis(t: number): string {
  const u = Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0;
  const pos = u * (VIRIDIS.length - 1);
  const i = Math.min(VIRIDIS.length - 2, Math.floor(pos));
  const f = pos - i;
  const a = hex(VIRIDIS[i]!);
  const b = hex(VIRIDIS[i + 1]!);
  const c = a.map((v, k) => Math.round(v + (b[k]! - v) * f));
  return `#${c.map((v) => v.toString(16).padStart(2, '0')).join('')}`;
}

function hex(s: string): [number, number, number] {
  return [parseInt(s.slice(1, 3), 16), parseInt(s.slice(3, 5), 16), parseInt(s.slice(5, 7), 16)];
}
