import type { Header, ImageData } from '../fits/types.js';
import { observationOf } from '../frame/observation.js';
import { frameView } from '../image/view.js';
import { backgroundMesh, meshLevelGrid, type BackgroundMesh } from '../stats/mesh.js';
import { analyzeStars } from '../stars/analyze.js';
import type { NumericPixels, StarDetection, StarImage, TrailDetection } from '../stars/types.js';
import { InvalidInputError } from '../errors.js';
import { frameObservationValues } from './observation.js';
import type { FrameMetrics } from './types.js';

/** Options of {@link measureLightFrame}. */
export interface LightFrameOptions {
  /** Mesh box size (px, default 64). */
  boxSize?: number;
  /** Saturation level (ADU). Default: 0.95 × the type maximum for uint8/uint16 data (REFERENCE E.3, common practice). */
  saturationAdu?: number;
  /** Detection threshold in noise sigmas (default: the star detector's, 5). */
  thresholdSigma?: number;
  /** Gain for per-star SNR (e-/ADU). */
  gainElectronsPerAdu?: number;
  /** Skip the trail search (faster). */
  skipTrails?: boolean;
  /** Stars whose fluxes give `starSignalAdu` (the brightest unsaturated ones; default 20). */
  signalStars?: number;
}

/** The metrics plus the intermediate products a report may draw (background mesh, stars, trails). */
export interface LightFrameMeasurement {
  metrics: FrameMetrics;
  mesh: BackgroundMesh;
  stars: StarDetection;
  trails: TrailDetection | null;
}

/** The frame as the star kernels read it; a class, not a literal (DEVELOPERS.md, "Objects made once a frame"). */
class FrameImage implements StarImage {
  declare readonly pixels: NumericPixels;
  declare readonly width: number;
  declare readonly height: number;

  constructor(pixels: NumericPixels, width: number, height: number) {
    this.pixels = pixels;
    this.width = width;
    this.height = height;
  }
}

/** Plate scale in arcsec per pixel: 206.265 × pixel size (µm, as written, binning included) / focal length (mm) (REFERENCE E.1). */
export function plateScaleArcsecPerPixel(pixelSizeMicrons: number | undefined, focalLengthMm: number | undefined): number | undefined {
  if (!(pixelSizeMicrons! > 0) || !(focalLengthMm! > 0)) return undefined;
  return (206.264806 * pixelSizeMicrons!) / focalLengthMm!;
}

function defaultSaturation(image: ImageData): number | undefined {
  if (image.elementType === 'uint16') return 0.95 * 65535;
  if (image.elementType === 'uint8') return 0.95 * 255;
  return undefined;
}

/**
 * Per-frame audit metrics of one light frame: mesh background and noise (REFERENCE C.5), star detection and shapes
 * over the background map (E.2-E.3), a Hough trail search on the star-masked image (E.4; sources on a trail are
 * then not counted as stars), the saturated-pixel fraction and the signal of the brightest unsaturated stars (the
 * transparency proxy `starSignalAdu`; the frame weight is then (starSignal / noise)², i.e. ∝ SNR², computed by the
 * session audit).
 * @throws InvalidInputError INPUT_BAD_PARAMETER for 64-bit integer pixels.
 */
export function measureLightFrame(file: string, image: ImageData, header: Header, opts: LightFrameOptions = {}): LightFrameMeasurement {
  if (image.pixels instanceof BigInt64Array || image.pixels instanceof BigUint64Array) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', '64-bit integer pixels are not supported for the audit', { file });
  }
  const obs = observationOf(header);
  const { width, height } = image;
  const saturationAdu = opts.saturationAdu ?? defaultSaturation(image);
  const view = frameView(image, 0);
  const mesh = backgroundMesh(view, {
    boxSize: opts.boxSize ?? 64,
    blankValue: image.blankValue,
    ...(saturationAdu !== undefined ? { saturationAdu } : {}),
  });
  // The detector reads plane 0 as a contiguous row-major store (a view of the same buffer, never a copy).
  const pixels = image.pixels.subarray(0, width * height) as NumericPixels;
  const starImage = new FrameImage(pixels, width, height);
  // The mesh level interpolated on the fly, equal to its Float32Array map (renderMeshMap) without writing and
  // re-reading width x height values: memory traffic limits how well worker threads scale.
  const background = meshLevelGrid(mesh, 'level');
  const noise = mesh.medianNoiseAdu > 0 ? mesh.medianNoiseAdu : 1;
  const { detection: stars, stars: starSources, summary, trails } = analyzeStars(starImage, {
    background,
    noise,
    detect: {
      ...(opts.thresholdSigma !== undefined ? { thresholdSigma: opts.thresholdSigma } : {}),
      ...(saturationAdu !== undefined ? { saturationAdu } : {}),
      ...(opts.gainElectronsPerAdu !== undefined ? { gainElectronsPerAdu: opts.gainElectronsPerAdu } : {}),
    },
    trails: opts.skipTrails ? false : {},
  });

  const unsaturated = starSources.filter((s) => !s.saturated && !s.tooLarge && !s.touchesEdge).map((s) => s.fluxAdu);
  unsaturated.sort((a, b) => b - a);
  const nSignal = Math.min(opts.signalStars ?? 20, unsaturated.length);
  const top = unsaturated.slice(0, nSignal).sort((a, b) => a - b);
  const starSignalAdu = nSignal ? (nSignal % 2 ? top[(nSignal - 1) / 2]! : (top[nSignal / 2 - 1]! + top[nSignal / 2]!) / 2) : null;
  const snrs = starSources.map((s) => s.snr).filter((v) => Number.isFinite(v)).sort((a, b) => a - b);
  const snrEstimate = snrs.length ? snrs[Math.floor(snrs.length / 2)] : undefined;
  const scale = plateScaleArcsecPerPixel(obs.pixelSizeMicrons, obs.focalLengthMm);
  const total = mesh.pixels.validCount + mesh.pixels.saturatedCount;

  const metrics: FrameMetrics = {
    file,
    ...frameObservationValues(obs, width, height),
    backgroundAdu: mesh.medianLevelAdu,
    noiseAdu: mesh.medianNoiseAdu,
    gradientPercent: mesh.gradient.percent,
    starCount: starSources.length,
    fwhmPixels: summary.medianFwhmPixels,
    fwhmArcsec: summary.medianFwhmPixels !== null && scale !== undefined ? summary.medianFwhmPixels * scale : null,
    elongation: summary.medianElongation,
    elongationAngleDegrees: summary.elongationAngleDegrees,
    saturatedStarFraction: summary.saturatedFraction,
    saturatedPixelFraction: total > 0 ? mesh.pixels.saturatedCount / total : 0,
    trails: (trails?.trails ?? []).map((t) => ({
      angleDegrees: t.angleDegrees,
      lengthPixels: t.lengthPixels,
      x0: t.x0,
      y0: t.y0,
      x1: t.x1,
      y1: t.y1,
      snr: t.snr,
      widthPixels: t.widthPixels,
    })),
    starSignalAdu,
    ...(snrEstimate !== undefined ? { snrEstimate } : {}),
    counts: {
      backgroundPixels: mesh.pixels.validCount,
      gradientBoxes: mesh.gradient.boxCount,
      shapeStars: summary.shapeStarCount,
      signalStars: nSignal,
      saturationPixels: total,
    },
  };
  return { metrics, mesh, stars, trails };
}
