import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { auditSession } from '@subgauge/core';
import type { AuditReason, AuditResult, FrameMetrics, UnreadableFrame } from '@subgauge/core';
import { HEIGHT, WIDTH, cleanNight, matchingCalibration, scaleSky } from './night.js';

type Defect = { name: string; reason: AuditReason; apply: (f: FrameMetrics) => void };

// One defect per frame, sized as a practitioner would see it on a real night (our choice of sizes).
const DEFECTS: Defect[] = [
  {
    name: 'satellite trail',
    reason: 'trail',
    apply: (f) => {
      f.trails = [{ angleDegrees: 33, lengthPixels: 2400, x0: 100, y0: 200, x1: 2113, y1: 1507, snr: 12 }];
    },
  },
  {
    name: 'cloud lit by the town (fewer stars, brighter sky)',
    reason: 'cloud',
    apply: (f) => {
      f.starCount = Math.round(f.starCount * 0.35);
      scaleSky(f, 1.5);
      f.starSignalAdu = (f.starSignalAdu as number) * 0.6;
    },
  },
  {
    name: 'cloud at a dark site (fewer stars, darker sky, dimmer stars)',
    reason: 'cloud',
    apply: (f) => {
      f.starCount = Math.round(f.starCount * 0.4);
      scaleSky(f, 0.8);
      f.starSignalAdu = (f.starSignalAdu as number) * 0.5;
    },
  },
  {
    name: 'soft focus',
    reason: 'soft-focus',
    apply: (f) => {
      f.fwhmPixels = (f.fwhmPixels as number) * 1.45;
      f.starCount = Math.round(f.starCount * 0.85);
    },
  },
  { name: 'wind gust (elongation 1.55)', reason: 'elongated-stars', apply: (f) => void (f.elongation = 1.55) },
  { name: 'guiding drift (elongation 1.3)', reason: 'elongated-stars', apply: (f) => void (f.elongation = 1.3) },
  {
    name: 'moon rising (brighter sky)',
    reason: 'bright-sky',
    apply: (f) => {
      scaleSky(f, 1.7);
      f.starCount = Math.round(f.starCount * 0.8);
    },
  },
  { name: 'dawn gradient', reason: 'bright-sky', apply: (f) => void (f.gradientPercent = 15) },
  { name: 'dew on the corrector (few stars)', reason: 'few-stars', apply: (f) => void (f.starCount = Math.round(f.starCount * 0.4)) },
  { name: 'a flood light (saturated pixels)', reason: 'saturated', apply: (f) => void (f.saturatedPixelFraction = 0.004) },
  {
    name: 'wrong exposure',
    reason: 'exposure-mismatch',
    apply: (f) => {
      f.exposureSeconds = 120;
      scaleSky(f, 0.4);
    },
  },
  {
    name: 'other binning',
    reason: 'binning-mismatch',
    apply: (f) => {
      f.binningX = 2;
      f.binningY = 2;
      f.width = WIDTH / 2;
      f.height = HEIGHT / 2;
    },
  },
  {
    name: 'other size (subframe)',
    reason: 'size-mismatch',
    apply: (f) => {
      f.width = 2000;
      f.height = 1500;
    },
  },
  { name: 'other gain', reason: 'gain-mismatch', apply: (f) => void (f.gainSetting = 200) },
  { name: 'other offset', reason: 'gain-mismatch', apply: (f) => void (f.offsetSetting = 30) },
  { name: 'warm sensor', reason: 'temperature-drift', apply: (f) => void (f.sensorTemperatureCelsius = -7.2) },
];

const UNREADABLE: UnreadableFrame = {
  file: 'L_broken.fits',
  code: 'FITS_TRUNCATED',
  message: 'data ends at byte 5760; expected 23390208',
  where: { hdu: 0, byte: 5760 },
};

/** A night of `n` frames with each defect on its own frame (every third frame from the fourth) plus an unreadable file. */
function defectNight(seed: number, n = 60): { lights: (FrameMetrics | UnreadableFrame)[]; defective: Map<string, Defect> } {
  const frames = cleanNight(seed, { frames: n });
  const defective = new Map<string, Defect>();
  DEFECTS.forEach((d, k) => {
    const f = frames[3 + 3 * k] as FrameMetrics;
    d.apply(f);
    defective.set(f.file, d);
  });
  const lights: (FrameMetrics | UnreadableFrame)[] = [...frames];
  lights.splice(10, 0, UNREADABLE);
  return { lights, defective };
}

function keepRate(r: AuditResult, skip: (file: string) => boolean): { kept: number; total: number } {
  let kept = 0;
  let total = 0;
  for (const f of r.frames) {
    if (skip(f.file)) continue;
    total++;
    if (f.verdict === 'keep') kept++;
  }
  return { kept, total };
}

describe('auditSession on clean simulated nights', () => {
  test('auditSession(clean nights of 30-60 frames, 12 seeds) keeps at least 95 % of the frames of every night', () => {
    let kept = 0;
    let total = 0;
    for (let seed = 1; seed <= 12; seed++) {
      const n = 30 + ((seed * 7) % 31);
      const r = auditSession({ lights: cleanNight(seed, { frames: n }), calibration: matchingCalibration() });
      const k = keepRate(r, () => false);
      expect(k.kept / k.total, `seed ${seed}`).toBeGreaterThanOrEqual(0.95);
      kept += k.kept;
      total += k.total;
      expect(r.gaps.gaps).toEqual([]);
      expect(r.groups).toHaveLength(1);
      expect(r.groups[0]?.missing).toEqual([]);
    }
    expect(kept / total).toBeGreaterThanOrEqual(0.95);
  });

  test('auditSession(clean night) returns plain JSON that survives a JSON round trip unchanged', () => {
    const r = auditSession({ lights: defectNight(5).lights, calibration: matchingCalibration() });
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
    expect(r.schema).toBe('subgauge.audit/1');
  });
});

describe('auditSession on nights with injected defects', () => {
  for (const seed of [11, 12, 13]) {
    test(`auditSession(night with every defect, seed ${seed}) gives each defect its reason and keeps the clean frames`, () => {
      const { lights, defective } = defectNight(seed);
      const r = auditSession({ lights, calibration: matchingCalibration() });
      expect(r.frames.map((f) => f.file)).toEqual(lights.map((f) => f.file));
      for (const f of r.frames) {
        const d = defective.get(f.file);
        if (d === undefined) continue;
        expect(f.reasons, `${d.name} (${f.file})`).toContain(d.reason);
        expect(f.verdict, d.name).not.toBe('keep');
        for (const det of f.details.filter((x) => x.reason === d.reason)) {
          expect(det.metric.length).toBeGreaterThan(0);
        }
      }
      const broken = r.frames.find((f) => f.file === UNREADABLE.file);
      expect(broken?.verdict).toBe('reject');
      expect(broken?.reasons).toEqual(['unreadable']);
      expect(broken?.error?.code).toBe('FITS_TRUNCATED');
      const k = keepRate(r, (file) => defective.has(file) || file === UNREADABLE.file);
      expect(k.kept / k.total).toBeGreaterThanOrEqual(0.95);
      expect(r.counts.frames).toBe(lights.length);
      expect(r.counts.keep + r.counts.review + r.counts.reject).toBe(lights.length);
    });
  }

  test('auditSession(cloudy frame) explains the reason with value, session median and limits', () => {
    const { lights, defective } = defectNight(21);
    const r = auditSession({ lights, calibration: matchingCalibration() });
    const cloudy = r.frames.find((f) => defective.get(f.file)?.name.startsWith('cloud lit'));
    const stars = cloudy?.details.find((d) => d.reason === 'cloud' && d.metric === 'starCount');
    expect(stars?.test).toBe('below');
    expect(stars?.value as number).toBeLessThan(stars?.limit as number);
    expect(stars?.limit).toBeCloseTo(0.6 * (stars?.reference as number), 9);
    expect(stars?.zScore as number).toBeLessThanOrEqual(-3);
    expect(cloudy?.verdict).toBe('reject');
    // Cloud explains the missing stars: no separate few-stars reason.
    expect(cloudy?.reasons).not.toContain('few-stars');
  });

  test('auditSession(frames with mismatches) names the reference value of the filter', () => {
    const { lights, defective } = defectNight(22);
    const r = auditSession({ lights, calibration: matchingCalibration() });
    const gain = r.frames.find((f) => defective.get(f.file)?.name === 'other gain');
    expect(gain?.details).toContainEqual(expect.objectContaining({ reason: 'gain-mismatch', metric: 'gainSetting', value: 200, reference: 100 }));
    const binned = r.frames.find((f) => defective.get(f.file)?.name === 'other binning');
    expect(binned?.verdict).toBe('reject');
    expect(binned?.details).toContainEqual(expect.objectContaining({ reason: 'binning-mismatch', value: '2x2', reference: '1x1' }));
    const warm = r.frames.find((f) => defective.get(f.file)?.name === 'warm sensor');
    expect(warm?.details).toContainEqual(
      expect.objectContaining({ reason: 'temperature-drift', metric: 'setpointDeviationCelsius', value: -7.2, reference: -10, limit: 1 }),
    );
    // The warm frame's group has no dark within 2 deg C.
    expect(warm?.reasons).toContain('no-calibration');
    expect(r.consistency.temperature.driftFiles).toEqual([warm?.file]);
  });

  test('auditSession(lights, limits) follows a changed severity and a changed limit', () => {
    const { lights, defective } = defectNight(23);
    const r = auditSession({
      lights,
      calibration: matchingCalibration(),
      limits: { trail: { severity: 'reject' }, softFocus: { fwhmRatioAbove: 1.6 } },
    });
    const trail = r.frames.find((f) => defective.get(f.file)?.reason === 'trail');
    expect(trail?.verdict).toBe('reject');
    const soft = r.frames.find((f) => defective.get(f.file)?.reason === 'soft-focus');
    expect(soft?.reasons).not.toContain('soft-focus');
    expect(r.limits.softFocus.fwhmRatioAbove).toBe(1.6);
  });

  test('auditSession(lights with invalid limits) throws INPUT_BAD_PARAMETER naming the field', () => {
    expect(() => auditSession({ lights: [], calibration: [], limits: { cloud: { zLimit: -1 } } })).toThrow(
      expect.objectContaining({ code: 'INPUT_BAD_PARAMETER', where: { keyword: 'cloud.zLimit' } }),
    );
  });

  test('auditSession(a light of width 0) throws INPUT_BAD_PARAMETER with the file', () => {
    const f = { ...(cleanNight(1, { frames: 1 })[0] as FrameMetrics), width: 0 };
    expect(() => auditSession({ lights: [f], calibration: [] })).toThrow(
      expect.objectContaining({ code: 'INPUT_BAD_PARAMETER', where: { file: f.file, keyword: 'width' } }),
    );
  });

  test('auditSession(a set below minFramesForStatistics) runs only the rules that need no session', () => {
    const frames = cleanNight(2, { frames: 4 });
    (frames[0] as FrameMetrics).fwhmPixels = 9;
    (frames[1] as FrameMetrics).saturatedPixelFraction = 0.01;
    const r = auditSession({ lights: frames, calibration: matchingCalibration() });
    expect(r.qualitySets[0]?.compared).toBe(false);
    expect(r.frames[0]?.reasons).toEqual([]);
    expect(r.frames[0]?.notes).toContain('quality-not-compared');
    expect(r.frames[1]?.reasons).toEqual(['saturated']);
  });
});

describe('auditSession with MAD = 0', () => {
  test('auditSession(frames with identical metrics but two) divides by the 1 % floor and flags only the large deviation', () => {
    const frames = cleanNight(41, { frames: 10 }).map((f) => ({ ...f, starCount: 800, fwhmPixels: 3, elongation: 1.1, backgroundAdu: 1700 }));
    (frames[2] as FrameMetrics).starCount = 784; // -2 %: z = -16 / (0.01 x 800) = -2
    (frames[5] as FrameMetrics).fwhmPixels = 3.9; // +30 %: z = 0.9 / 0.03 = 30
    const r = auditSession({ lights: frames, calibration: matchingCalibration() });
    expect(r.qualitySets[0]?.references.starCount).toMatchObject({ madSigma: 0, scale: 8, scaleSource: 'floor' });
    expect(r.frames[2]?.zScores.starCount).toBeCloseTo(-2, 12);
    expect(r.frames[2]?.reasons).toEqual([]);
    expect(r.frames[5]?.zScores.fwhmPixels).toBeCloseTo(30, 9);
    expect(r.frames[5]?.reasons).toEqual(['soft-focus']);
  });
});

describe('auditSession does not depend on input order', () => {
  test('auditSession(any permutation of a night) gives every file the same verdict, reasons and details', () => {
    const { lights } = defectNight(31, 52);
    const calibration = matchingCalibration();
    const base = auditSession({ lights, calibration });
    const byFile = new Map(base.frames.map((f) => [f.file, f]));
    fc.assert(
      fc.property(fc.shuffledSubarray(lights, { minLength: lights.length, maxLength: lights.length }), fc.shuffledSubarray(calibration, { minLength: calibration.length, maxLength: calibration.length }), (perm, cal) => {
        const r = auditSession({ lights: perm, calibration: cal });
        expect(r.frames.map((f) => f.file)).toEqual(perm.map((f) => f.file));
        for (const f of r.frames) {
          const b = byFile.get(f.file);
          expect(f.verdict).toBe(b?.verdict);
          expect(f.reasons).toEqual(b?.reasons);
          expect(f.details).toEqual(b?.details);
          expect(f.qualitySet).toBe(b?.qualitySet);
          expect(f.calibrationGroup).toBe(b?.calibrationGroup);
          if (b?.weight === null) expect(f.weight).toBeNull();
          else expect(f.weight).toBeCloseTo(b?.weight as number, 12);
        }
        expect(r.counts).toEqual(base.counts);
        expect(r.groups.map((g) => ({ ...g, lightFiles: [...g.lightFiles].sort() }))).toEqual(
          base.groups.map((g) => ({ ...g, lightFiles: [...g.lightFiles].sort() })),
        );
        expect(r.gaps).toEqual(base.gaps);
        expect(r.qualitySets).toEqual(base.qualitySets);
      }),
      { numRuns: 25, seed: 20310914 },
    );
  });
});
