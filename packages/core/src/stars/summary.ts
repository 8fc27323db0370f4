// Per-frame star statistics for audits (REFERENCE E.3, last item): FWHM and elongation of clean stars,
// elongation direction, saturated fraction, count above a fixed SNR.

import { InvalidInputError } from '../errors.js';
import { MAD_TO_SIGMA, medianInPlace } from './select.js';
import type { StarFieldSummary, StarSource, StarSummaryOptions } from './types.js';

/** Sources with another centroid closer than `radius` (grid hashing, cells of one radius). */
function crowdedFlags(sources: readonly StarSource[], radius: number): Uint8Array {
  const n = sources.length;
  const crowded = new Uint8Array(n);
  if (n < 2 || !(radius > 0)) return crowded;
  const cells = new Map<number, number[]>();
  const key = (cx: number, cy: number): number => cx * 1048576 + cy;
  for (let i = 0; i < n; i++) {
    const s = sources[i]!;
    const k = key(Math.floor(s.x / radius), Math.floor(s.y / radius));
    const list = cells.get(k);
    if (list) list.push(i);
    else cells.set(k, [i]);
  }
  const r2 = radius * radius;
  for (let i = 0; i < n; i++) {
    const s = sources[i]!;
    const cx = Math.floor(s.x / radius);
    const cy = Math.floor(s.y / radius);
    for (let dx = -1; dx <= 1 && !crowded[i]; dx++) {
      for (let dy = -1; dy <= 1 && !crowded[i]; dy++) {
        const list = cells.get(key(cx + dx, cy + dy));
        if (!list) continue;
        for (const j of list) {
          if (j === i) continue;
          const o = sources[j]!;
          const ex = o.x - s.x;
          const ey = o.y - s.y;
          if (ex * ex + ey * ey < r2) {
            crowded[i] = 1;
            break;
          }
        }
      }
    }
  }
  return crowded;
}

/**
 * Axial (mod 180 degrees) mean direction and coherence of angles in degrees: angles are doubled, averaged as
 * unit vectors and halved (the usual treatment of axial data; Mardia & Jupp 2000, from memory). Then the median
 * of the angles' offsets from that mean, wrapped into (-90, 90], is added back: the axial median.
 */
function axialMedian(anglesDegrees: Float64Array, n: number): { angle: number; coherence: number } {
  let c = 0;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const t = (anglesDegrees[i]! * Math.PI) / 90;
    c += Math.cos(t);
    s += Math.sin(t);
  }
  const coherence = Math.hypot(c, s) / n;
  const mean = (Math.atan2(s, c) * 90) / Math.PI;
  const off = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let d = anglesDegrees[i]! - mean;
    d -= 180 * Math.round(d / 180);
    if (d <= -90) d += 180;
    off[i] = d;
  }
  let angle = mean + medianInPlace(off, n);
  angle -= 180 * Math.round(angle / 180);
  if (angle <= -90) angle += 180;
  return { angle, coherence };
}

/**
 * Summarise a frame's sources for the audit. "Shape stars" are isolated (no other centroid within the isolation
 * radius), unsaturated, unblended, not too large, off the edge, with a measured FWHM of at least `minFwhmPixels`
 * (narrower ones are taken for cosmic rays or hot pixels). Their median FWHM, FWHM MAD-sigma, flux-weighted mean
 * FWHM, median half-flux radius, median elongation and the axial median of their major-axis angles (with the
 * coherence of those angles: near 0 for round stars with random noise angles, near 1 for trailed stars) are
 * given; the saturated fraction and the count above `snrThreshold` are over all sources.
 */
export function summarizeStars(sources: readonly StarSource[], options: StarSummaryOptions = {}): StarFieldSummary {
  const snrThreshold = options.snrThreshold ?? 20;
  const minFwhm = options.minFwhmPixels ?? 1.0;
  if (!(snrThreshold >= 0) || !(minFwhm >= 0)) {
    throw new InvalidInputError('INPUT_BAD_PARAMETER', 'snrThreshold and minFwhmPixels must be >= 0');
  }
  const n = sources.length;
  let saturated = 0;
  let aboveSnr = 0;
  for (const s of sources) {
    if (s.saturated) saturated++;
    if (s.snr >= snrThreshold) aboveSnr++;
  }
  const clean = (s: StarSource): boolean =>
    !s.saturated && !s.blended && !s.tooLarge && !s.touchesEdge && s.fwhmPixels !== null && s.fwhmPixels >= minFwhm;

  let radius = options.isolationRadiusPixels;
  if (radius === undefined) {
    const f = new Float64Array(n);
    let m = 0;
    for (const s of sources) if (clean(s)) f[m++] = s.fwhmPixels!;
    radius = Math.max(8, m > 0 ? 4 * medianInPlace(f, m) : 0);
  }
  if (!(radius >= 0)) throw new InvalidInputError('INPUT_BAD_PARAMETER', `isolationRadiusPixels must be >= 0, got ${radius}`);
  const crowded = crowdedFlags(sources, radius);

  const fwhm = new Float64Array(n);
  const hfr = new Float64Array(n);
  const elong = new Float64Array(n);
  const angle = new Float64Array(n);
  let m = 0;
  let nh = 0;
  let wsum = 0;
  let wfwhm = 0;
  for (let i = 0; i < n; i++) {
    const s = sources[i]!;
    if (crowded[i] || !clean(s)) continue;
    fwhm[m] = s.fwhmPixels!;
    elong[m] = s.elongation;
    angle[m] = s.thetaDegrees;
    if (s.halfFluxRadiusPixels !== null) hfr[nh++] = s.halfFluxRadiusPixels;
    if (s.fluxAdu > 0) {
      wsum += s.fluxAdu;
      wfwhm += s.fluxAdu * s.fwhmPixels!;
    }
    m++;
  }
  let medianFwhm: number | null = null;
  let madSigma: number | null = null;
  let medianElong: number | null = null;
  let dir: { angle: number; coherence: number } | null = null;
  if (m > 0) {
    medianFwhm = medianInPlace(fwhm, m);
    for (let i = 0; i < m; i++) fwhm[i] = Math.abs(fwhm[i]! - medianFwhm);
    madSigma = MAD_TO_SIGMA * medianInPlace(fwhm, m);
    medianElong = medianInPlace(elong, m);
    dir = axialMedian(angle, m);
  }
  return {
    sourceCount: n,
    shapeStarCount: m,
    medianFwhmPixels: medianFwhm,
    fwhmMadSigmaPixels: madSigma,
    fluxWeightedFwhmPixels: wsum > 0 ? wfwhm / wsum : null,
    medianHalfFluxRadiusPixels: nh > 0 ? medianInPlace(hfr, nh) : null,
    medianElongation: medianElong,
    elongationAngleDegrees: dir ? dir.angle : null,
    elongationAngleCoherence: dir ? dir.coherence : null,
    saturatedFraction: n > 0 ? saturated / n : 0,
    snrThreshold,
    countAboveSnr: aboveSnr,
    isolationRadiusPixels: radius,
  };
}
