import type { Header, ImageData } from '../fits/types.js';
import { cfaPattern, cfaPlanes } from '../image/cfa.js';
import { frameView, type FrameView } from '../image/view.js';
import { backgroundMesh, type BackgroundMesh } from '../stats/mesh.js';

/** Star-free sky level of one view from the mesh of clipped box levels (REFERENCE C.5). */
export interface SkyLevel {
  backgroundAdu: number;
  /** Standard error of the level: 1.2533 · spread of box levels / √boxes (spread = MAD-sigma of valid box levels). */
  backgroundUncertaintyAdu: number;
  noiseAdu: number;
  gradientPercent: number;
  boxCount: number;
}

export interface SkyBackground extends SkyLevel {
  /** Per CFA channel (R, G1, G2, B) for colour data. */
  channels?: { channel: string; level: SkyLevel }[];
  cfaPattern?: string;
}

export interface SkyBackgroundOptions {
  /** Box size of the mesh (default 64 px; 32 px per CFA plane). */
  boxSize?: number;
  /** Pixels at or above this are excluded (default: the largest value of the element type, 65535 for uint16). */
  saturationAdu?: number;
  /** Bias level, for the gradient in percent of the sky above it. */
  offsetAdu?: number;
}

function levelOf(mesh: BackgroundMesh): SkyLevel {
  const levels: number[] = [];
  for (let i = 0; i < mesh.rawLevelAdu.length; i++) {
    const v = mesh.rawLevelAdu[i]!;
    if (mesh.valid[i] && Number.isFinite(v)) levels.push(v);
  }
  levels.sort((a, b) => a - b);
  const n = levels.length;
  const med = n ? (n % 2 ? levels[(n - 1) / 2]! : (levels[n / 2 - 1]! + levels[n / 2]!) / 2) : NaN;
  const dev = levels.map((v) => Math.abs(v - med)).sort((a, b) => a - b);
  const mad = n ? (n % 2 ? dev[(n - 1) / 2]! : (dev[n / 2 - 1]! + dev[n / 2]!) / 2) : NaN;
  // standard error of a median ≈ √(π/2)·σ/√n for Gaussian spread (REFERENCE D.4 constant 1.2533)
  const se = n > 1 ? (1.2533141373155 * 1.482602218505602 * mad) / Math.sqrt(n) : NaN;
  // The level is the least-squares plane through the box levels, taken at the frame centre: with a gradient that is
  // the frame's mean sky (a median over boxes leans towards the side with the partial edge boxes), and averaging
  // many boxes resolves skies of a few ADU below one code, where each box median of integer data is a whole code
  // (REFERENCE C.6). Fewer than 3 boxes: the median box level.
  const plane = mesh.gradient;
  const level = plane.boxCount >= 3 && Number.isFinite(plane.centreLevelAdu) ? plane.centreLevelAdu : mesh.medianLevelAdu;
  return {
    backgroundAdu: level,
    backgroundUncertaintyAdu: se,
    noiseAdu: mesh.medianNoiseAdu,
    gradientPercent: mesh.gradient.percent,
    boxCount: mesh.validCount,
  };
}

function defaultSaturation(image: ImageData): number | undefined {
  switch (image.elementType) {
    case 'uint16':
      return 65535;
    case 'uint8':
      return 255;
    case 'int16':
      return 32767;
    default:
      return undefined;
  }
}

/**
 * Sky background of a light frame free of stars: a mesh of sigma-clipped box levels (stars are clipped inside each
 * box and boxes dominated by them are replaced from neighbours), summarised by the median over boxes.
 * For CFA data (BAYERPAT) each channel is measured on its own plane as well.
 */
export function skyBackground(image: ImageData, header: Header, opts: SkyBackgroundOptions = {}): SkyBackground {
  const saturationAdu = opts.saturationAdu ?? defaultSaturation(image);
  const meshOpts = {
    boxSize: opts.boxSize ?? 64,
    level: 'mean' as const,
    blankValue: image.blankValue,
    ...(saturationAdu !== undefined ? { saturationAdu } : {}),
    ...(opts.offsetAdu !== undefined ? { offsetAdu: opts.offsetAdu } : {}),
  };
  const view: FrameView = frameView(image, 0);
  const out: SkyBackground = levelOf(backgroundMesh(view, meshOpts));
  const pattern = cfaPattern(header);
  if (pattern) {
    const planes = cfaPlanes(view, pattern);
    const planeOpts = { ...meshOpts, boxSize: Math.max(8, Math.round((opts.boxSize ?? 64) / 2)) };
    out.cfaPattern = pattern.name;
    out.channels = (['r', 'g1', 'g2', 'b'] as const).map((k) => ({ channel: k.toUpperCase(), level: levelOf(backgroundMesh(planes[k], planeOpts)) }));
  }
  return out;
}
