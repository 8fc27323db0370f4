import type { Diagnostic } from '../diagnostics.js';
import type { Pixels } from '../fits/types.js';

/** Pixel stores the star kernels read (every `Pixels` type except the 64-bit integer ones). */
export type NumericPixels = Exclude<Pixels, BigInt64Array | BigUint64Array>;

/** A background or noise level: one value for the whole frame, or a full-resolution map (row-major, width x height). */
export type LevelMap = number | Float32Array | Float64Array;

/**
 * A background level held on a grid of box centres and interpolated bilinearly between them, exactly as
 * `renderMeshMap` (stats/mesh.ts) writes it into a Float32Array: each value is rounded to float32. The star
 * kernels compute it row by row (or per pixel) instead of reading a full-resolution map, which saves writing
 * and reading width x height values per frame. Build one with `meshLevelGrid`.
 */
export interface LevelGrid {
  kind: 'level-grid';
  width: number;
  height: number;
  /** Grid size (boxes across and down). */
  columns: number;
  rows: number;
  /** Grid values, row-major (rows x columns). */
  values: Float64Array;
  /** Per pixel column x: the grid columns either side and the weight of the right one. */
  colLeft: Int32Array;
  colRight: Int32Array;
  colWeight: Float64Array;
  /** Runs of pixel columns sharing both grid columns, as (first x, left, right) triples; the last run ends at width. */
  colSpans: Int32Array;
  /** Per pixel row y: the grid rows either side and the weight of the lower one. */
  rowTop: Int32Array;
  rowBottom: Int32Array;
  rowWeight: Float64Array;
}

/** A background level as the star kernels accept it: a {@link LevelMap} or a {@link LevelGrid}. */
export type BackgroundLevels = LevelMap | LevelGrid;

/** A frame as the star kernels see it: contiguous row-major pixels, pixel (x, y) at `pixels[y * width + x]`. */
export interface StarImage {
  pixels: NumericPixels;
  width: number;
  height: number;
}

/** Options of {@link detectStars}. Defaults are given per field. */
export interface DetectStarsOptions {
  /** Background level in ADU (a number, a full-resolution map or a grid interpolated on the fly). Required. */
  background: BackgroundLevels;
  /** Background noise (one-sigma, ADU per pixel; a number or a full-resolution map). Required, > 0. */
  noise: LevelMap;
  /**
   * Detection threshold in units of the noise of the image that is thresholded. Default 5 on the raw image;
   * default 4 when `filterFwhmPixels` > 0 (then in units of the filtered image's noise, noise x sqrt(sum w^2)).
   */
  thresholdSigma?: number;
  /** FWHM of an optional Gaussian matched filter applied before thresholding (px). Default 0 (off). */
  filterFwhmPixels?: number;
  /** Pixel connectivity of a source: 4 (edges) or 8 (edges and corners). Default 8. */
  connectivity?: 4 | 8;
  /** Fewest pixels above threshold for a source. Default 5. */
  minPixels?: number;
  /** Components with more pixels than this are flagged `tooLarge`; they are not split and get no shape fit. Default 10000. */
  maxPixels?: number;
  /**
   * Most components measured (default 50000); past it only the largest are kept and a STARS_SOURCE_LIMIT
   * warning is returned (bounds the time when the background or noise given is badly wrong).
   */
  maxSources?: number;
  /**
   * Raw level (ADU) at or above which a pixel counts as saturated. Default: 0.95 x the type maximum for
   * Uint8Array/Uint16Array data (common practice, REFERENCE E.3), no saturation test for other types.
   */
  saturationAdu?: number;
  /** Split touching stars at saddle points (see `deblendMinDipSigma`/`deblendMinDipFraction`). Default true. */
  deblend?: boolean;
  /** A peak is a separate star only if it rises at least this many noise sigmas above the saddle. Default 3. */
  deblendMinDipSigma?: number;
  /** ... and at least this fraction of its own background-subtracted peak above the saddle. Default 0.3. */
  deblendMinDipFraction?: number;
  /** Gain for the Poisson term of the per-source SNR; without it the SNR is background-noise limited. */
  gainElectronsPerAdu?: number;
  /**
   * Box-Cox exponent of the profile model for the FWHM fit (0 Gaussian, -1/beta Moffat beta). Default: found per
   * frame from its brightest clean stars.
   */
  profileLambda?: number;
  /** Measure a sigma-clipped median of raw pixels in an annulus around each source (`localBackgroundAdu`). Default false. */
  localBackground?: boolean;
}

/** Inclusive pixel bounding box. */
export interface PixelBox {
  xMin: number;
  xMax: number;
  yMin: number;
  yMax: number;
}

/**
 * One detected source. Coordinates are 0-based with pixel (x, y) centred on integer x, y.
 * Values marked "null when not measured" are null for `tooLarge` sources or when the profile fit fails.
 */
export interface StarSource {
  /** 1-based, in raster order of the component's first pixel (split parts follow in peak order). */
  id: number;
  /** Flux-weighted, background-subtracted centroid over the footprint (REFERENCE E.2) (px). */
  x: number;
  y: number;
  /**
   * Centroid under the adaptive Gaussian weight (px): less noisy than x, y; equal to x, y when the adaptive
   * moments fail (`shapeMethod` 'isophotal').
   */
  xWindowed: number;
  yWindowed: number;
  /** Brightest footprint pixel (px, integer). */
  xPeak: number;
  yPeak: number;
  /** Background-subtracted value of the brightest footprint pixel (ADU). */
  peakAdu: number;
  /** Sum of background-subtracted footprint pixels (ADU). */
  fluxAdu: number;
  /** Footprint size (pixels above threshold assigned to this source). */
  areaPixels: number;
  box: PixelBox;
  /**
   * Shape second moments (px^2): Gaussian-weighted adaptive moments (for a Gaussian star they equal its
   * covariance), or the isophotal moments of REFERENCE E.2 when `shapeMethod` is 'isophotal'.
   */
  x2Pixels2: number;
  y2Pixels2: number;
  xyPixels2: number;
  /** Semi-major and semi-minor axes: square roots of the moment matrix's eigenvalues (px). */
  aPixels: number;
  bPixels: number;
  /** Position angle of the major axis, degrees from +x towards +y, in (-90, 90]. */
  thetaDegrees: number;
  /** A/B (>= 1). */
  elongation: number;
  /** 1 - B/A. */
  ellipticity: number;
  shapeMethod: 'adaptive' | 'isophotal';
  /**
   * Full width at half maximum (px): sqrt((Fmajor^2 + Fminor^2)/2) of the half-maximum ellipse of a fitted
   * profile (a quadratic fitted to Box-Cox transformed pixels: exact for Gaussian and Moffat stars; see
   * `measure.ts`). Null when not measured.
   */
  fwhmPixels: number | null;
  fwhmMajorPixels: number | null;
  fwhmMinorPixels: number | null;
  /**
   * Radius of the circle about the windowed centroid that holds half of the background-subtracted flux found
   * within 3 FWHM of it (at least 4, at most 40 px). Each pixel's flux is spread evenly over its area (pixels
   * within FWHM + 1.5 px of the centre are split 4x4 for that), so this is the half-flux radius of the pixelated
   * star: for a Gaussian, sqrt(2 ln 2 (sigma^2 + 1/12)) rather than sqrt(2 ln 2) sigma (REFERENCE E.1; +2.5 %
   * at FWHM 3 px). Wide Moffat wings outside the aperture lower it slightly. Null when not measured.
   */
  halfFluxRadiusPixels: number | null;
  /** fluxAdu / sqrt(areaPixels * noise^2 + fluxAdu / gain) (the Poisson term only when a gain is given). */
  snr: number;
  /** Sigma-clipped median of raw pixels in an annulus about the source (ADU); null unless asked for. */
  localBackgroundAdu: number | null;
  /** Footprint touches the frame edge. */
  touchesEdge: boolean;
  /** Some footprint pixel is at or above the saturation level. */
  saturated: boolean;
  /** The component had more than `maxPixels` pixels. */
  tooLarge: boolean;
  /** The source was split from a component holding several peaks. */
  blended: boolean;
}

/** Result of {@link detectStars}. */
export interface StarDetection {
  sources: StarSource[];
  /** Threshold actually used, in noise sigmas of the thresholded image. */
  thresholdSigma: number;
  filterFwhmPixels: number;
  connectivity: 4 | 8;
  /** Saturation level used (ADU); Infinity when none. */
  saturationAdu: number;
  /** Box-Cox exponent of the profile fits (0 Gaussian, -1/beta Moffat beta); see `measure.ts`. */
  profileLambda: number;
  /** Stars whose profile scan set `profileLambda` (0 when it was given or no star qualified). */
  profileCalibrationStars: number;
  /** Pixels above threshold (in all components, kept or not). */
  pixelsAboveThreshold: number;
  /** Connected components found before the `minPixels` cut and before splitting. */
  componentCount: number;
  width: number;
  height: number;
  diagnostics: Diagnostic[];
}

/** Options of {@link summarizeStars}. */
export interface StarSummaryOptions {
  /** SNR for `countAboveSnr`. Default 20. */
  snrThreshold?: number;
  /** A star is isolated when no other source centroid lies within this radius (px). Default max(8, 4 x median FWHM). */
  isolationRadiusPixels?: number;
  /** Sources narrower than this are treated as cosmic rays or hot pixels and left out of the shape medians (px). Default 1.0. */
  minFwhmPixels?: number;
}

/** Per-frame summary of {@link summarizeStars}. Medians are null when no star qualifies. */
export interface StarFieldSummary {
  sourceCount: number;
  /** Isolated, unsaturated, unblended, not touching the edge, not too large, with a measured FWHM >= minFwhmPixels. */
  shapeStarCount: number;
  medianFwhmPixels: number | null;
  /** MAD-sigma (1.482602 x MAD) of the shape stars' FWHM (px). */
  fwhmMadSigmaPixels: number | null;
  /** Flux-weighted mean FWHM of the shape stars (px). */
  fluxWeightedFwhmPixels: number | null;
  medianHalfFluxRadiusPixels: number | null;
  medianElongation: number | null;
  /** Axial median of the shape stars' major-axis angles, degrees in (-90, 90] (angles wrap every 180). */
  elongationAngleDegrees: number | null;
  /** Mean resultant length of the doubled angles (0: random directions, 1: all aligned). */
  elongationAngleCoherence: number | null;
  /** Saturated sources / all sources (0 when there are none). */
  saturatedFraction: number;
  snrThreshold: number;
  countAboveSnr: number;
  isolationRadiusPixels: number;
}

/** Options of {@link detectTrails}. */
export interface DetectTrailsOptions {
  background: BackgroundLevels;
  noise: LevelMap;
  /** Sources to mask (usually `detectStars(...).sources`). Elongated unsaturated ones are left unmasked: they may be trail pieces. */
  sources?: readonly StarSource[];
  /** Block size for the Hough mask (px). Default max(2, ceil(max(width, height) / 1024)). */
  binFactor?: number;
  /** Threshold on the block z-score (block mean against its local median and MAD-sigma). Default 2.5. */
  blockThresholdSigma?: number;
  /** Shortest trail reported (px). Default max(64, 0.15 x min(width, height)). */
  minLengthPixels?: number;
  /** Most trails reported. Default 8. */
  maxTrails?: number;
  /** Extra mask radius around each source (px). Default 2. */
  maskGrowPixels?: number;
}

/** One trail found by {@link detectTrails}. */
export interface Trail {
  /** End points of the significant part of the line (px, 0-based). */
  x0: number;
  y0: number;
  x1: number;
  y1: number;
  /** Direction, degrees from +x towards +y, in [0, 180). */
  angleDegrees: number;
  /** Distance between the end points (px). */
  lengthPixels: number;
  /** Mean background-subtracted level in the trail core minus that of strips either side (ADU per pixel). */
  surfaceBrightnessAdu: number;
  /** surfaceBrightnessAdu divided by its standard error from the noise. */
  snr: number;
  /** FWHM of the cross profile (px); null when the profile is too weak to measure. */
  widthPixels: number | null;
  /** Unmasked full-resolution pixels of the core strip between the end points. */
  supportingPixels: number;
  /** Blocks of the binned mask that voted for the line. */
  supportingBlocks: number;
  /** Fraction of 64-px segments between the end points whose core is significantly above the side strips. */
  coverageFraction: number;
  /** 'hough' (line found in the accumulator) or 'component' (a long, elongated connected component). */
  foundBy: 'hough' | 'component';
}

/** Result of {@link detectTrails}. */
export interface TrailDetection {
  trails: Trail[];
  binFactor: number;
  /** Lines checked at full resolution. */
  candidatesChecked: number;
  diagnostics: Diagnostic[];
}
