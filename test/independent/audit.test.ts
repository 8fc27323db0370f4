import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../helpers/cli.js';
import { pythonWithAstropy, requireOutside } from '../helpers/outside.js';
import { biasOnlyLimits, generateNight, recordOf, type NightFrameTruth, type NightTruth } from './night.js';

// Outside reference: scripts/reference/independent_night.py (numpy 1.24 Poisson and normal generators, astropy
// 5.2.1 writer; Debian python3-numpy, python3-astropy) writes a night of an invented camera with one injected defect
// per chosen frame and records the reason code each should give (truth.json `expectedReasons`, DESIGN.md section 2
// vocabulary). It shares no code with the library or its simulator. The night holds lights and 2 bias frames; the
// limits file asks for no darks or flats, so the biases give the pedestal and nothing gets `no-calibration`.

interface Detail { reason: string; metric: string; test: string; value: number | string | null; reference: number | string | null; ratio: number | null }
interface TrailMetric { angleDegrees: number; lengthPixels: number; x0: number; y0: number; x1: number; y1: number }
interface FrameRecord {
  file: string;
  verdict: 'keep' | 'review' | 'reject';
  reasons: string[];
  details: Detail[];
  skyAdu: number | null;
  pedestalSource: string | null;
  metrics: { starCount: number; fwhmPixels: number | null; elongation: number | null; elongationAngleDegrees: number | null; starSignalAdu: number | null; trails: TrailMetric[] } | null;
}
interface AuditDoc { schema: string; frames: FrameRecord[]; counts: { keep: number; review: number; reject: number } }

const SEEDS = [1, 2, 3];

interface Night {
  seed: number;
  truth: NightTruth;
  doc: AuditDoc;
}

const median = (values: readonly number[]) => {
  const s = [...values].sort((a, b) => a - b);
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2]! : (s[n / 2 - 1]! + s[n / 2]!) / 2;
};
/** Difference of two axial directions (degrees, period 180). */
const axialDifference = (a: number, b: number) => {
  const d = (((a - b) % 180) + 180) % 180;
  return Math.min(d, 180 - d);
};
/** Frames of the night sharing the clean frames' exposure, binning and size (the comparison set of the rules). */
const sameSet = (truth: NightTruth) => truth.frames.filter((f) => f.binning === 1 && !f.defects.includes('exposure'));

describe('subgauge audit on nights from the independent numpy/astropy generator', () => {
  const t = tempDir('subgauge-independent-audit-');
  const available = pythonWithAstropy() !== undefined;
  const nights: Night[] = [];
  beforeAll(async () => {
    if (!available) return;
    for (const seed of SEEDS) {
      const dir = path.join(t.dir, `night-${seed}`);
      const truth = generateNight(dir, seed);
      const r = await runCli(['audit', path.join(dir, 'light'), path.join(dir, 'bias'), '--json', '--jobs', '1', '--limits', biasOnlyLimits(dir)]);
      expect(r.code, r.stderr).toBe(0);
      nights.push({ seed, truth, doc: JSON.parse(r.stdout) as AuditDoc });
    }
  }, 120_000);
  afterAll(() => t.cleanup());

  const need = (ctx: { skip: (note?: string) => void }) => requireOutside('python3 with numpy and astropy', available, ctx);
  const each = (fn: (night: Night, f: NightFrameTruth, rec: FrameRecord) => void) => {
    for (const night of nights) {
      for (const f of night.truth.frames) {
        const rec = recordOf(night.doc.frames, f.file);
        expect(rec, `seed ${night.seed} ${f.file}`).toBeDefined();
        fn(night, f, rec!);
      }
    }
  };

  it('audit --json catches every injected defect with its reason code, each reason explained by at least one detail', (ctx) => {
    if (!need(ctx)) return;
    const caught = new Map<string, number>();
    for (const { seed, truth, doc } of nights) {
      expect(doc.schema).toBe('subgauge.audit/1');
      expect(doc.frames).toHaveLength(truth.frames.length);
    }
    each(({ seed }, f, rec) => {
      const label = `seed ${seed} ${f.file} (${f.defects}): ${rec.verdict} ${rec.reasons}`;
      for (const reason of rec.reasons) expect(rec.details.some((d) => d.reason === reason), `${label}: ${reason} has no detail`).toBe(true);
      if (f.defects.length === 0) return;
      expect(rec.verdict, label).not.toBe('keep');
      for (const reason of f.expectedReasons) expect(rec.reasons, label).toContain(reason);
      caught.set(f.defects[0]!, (caught.get(f.defects[0]!) ?? 0) + 1);
    });
    const n = SEEDS.length;
    expect(Object.fromEntries(caught)).toEqual({ trail: n, cloud: n, 'soft-focus': n, trailed: n, warm: n, exposure: n, binning: n });
  });

  it('audit --json keeps at least 95 % of the clean frames over the runs', (ctx) => {
    if (!need(ctx)) return;
    let clean = 0;
    const flagged: string[] = [];
    each(({ seed }, f, rec) => {
      if (f.defects.length > 0) return;
      clean++;
      if (rec.verdict !== 'keep') flagged.push(`seed ${seed} ${f.file}: ${rec.reasons}`);
    });
    expect(clean).toBe(SEEDS.length * 17);
    expect((clean - flagged.length) / clean, flagged.join('; ')).toBeGreaterThanOrEqual(0.95);
  });

  it('audit --json details carry the true set point, sensor temperature, halved exposure, 2x2 binning and half size', (ctx) => {
    if (!need(ctx)) return;
    each(({ seed }, f, rec) => {
      const label = `seed ${seed} ${f.file}`;
      const detail = (reason: string, metric: string) => rec.details.find((d) => d.reason === reason && d.metric === metric);
      if (f.defects.includes('warm')) {
        expect(detail('temperature-drift', 'setpointDeviationCelsius'), label).toMatchObject({ value: f.sensorTemperatureCelsius, reference: f.setTemperatureCelsius });
      }
      if (f.defects.includes('exposure')) expect(detail('exposure-mismatch', 'exposureSeconds'), label).toMatchObject({ value: 30, reference: 60 });
      if (f.defects.includes('binning')) {
        expect(detail('binning-mismatch', 'binning'), label).toMatchObject({ value: '2x2', reference: '1x1' });
        expect(detail('size-mismatch', 'size'), label).toMatchObject({ value: `${f.width}x${f.height}`, reference: '400x300' });
      }
    });
  });

  it('audit --json measures the cloud sky ratio within 5 % and the soft-focus FWHM ratio within 15 % of the generator truth', (ctx) => {
    if (!need(ctx)) return;
    for (const { seed, truth, doc } of nights) {
      const set = sameSet(truth);
      const gain = truth.camera.gainElectronsPerAdu;
      const trueSkyMedian = median(set.map((f) => (f.skyElectrons + f.darkElectrons) / gain));
      const trueFwhmMedian = median(set.map((f) => f.fwhmPixels));
      for (const f of set) {
        const rec = recordOf(doc.frames, f.file)!;
        const label = `seed ${seed} ${f.file}`;
        // every frame of the set: the sky above the bias pedestal within 2 % of the truth (REFERENCE.md D.3)
        expect(rec.pedestalSource, label).toBe('bias');
        expect(Math.abs(rec.skyAdu! / ((f.skyElectrons + f.darkElectrons) / gain) - 1), `${label}: sky ${rec.skyAdu} ADU`).toBeLessThan(0.02);
        if (f.defects.includes('cloud')) {
          const d = rec.details.find((x) => x.reason === 'cloud' && x.metric === 'skyAdu');
          const trueRatio = (f.skyElectrons + f.darkElectrons) / gain / trueSkyMedian;
          expect(Math.abs(d!.ratio! / trueRatio - 1), `${label}: sky ratio ${d!.ratio} vs true ${trueRatio}`).toBeLessThan(0.05);
        }
        if (f.defects.includes('soft-focus')) {
          const d = rec.details.find((x) => x.reason === 'soft-focus' && x.metric === 'fwhmPixels');
          const trueRatio = f.fwhmPixels / trueFwhmMedian;
          expect(Math.abs(d!.ratio! / trueRatio - 1), `${label}: FWHM ratio ${d!.ratio} vs true ${trueRatio}`).toBeLessThan(0.15);
        }
      }
    }
  });

  it('audit --json measures the trailed stars near elongation 2 along the injected direction (REFERENCE.md E.2) and round stars below 1.2', (ctx) => {
    if (!need(ctx)) return;
    each(({ seed }, f, rec) => {
      const m = rec.metrics!;
      const label = `seed ${seed} ${f.file}: elongation ${m.elongation} at ${m.elongationAngleDegrees}`;
      if (f.elongation > 1) {
        // pixel-integrated moments of this PSF give A/B = 1.963 (1/12 px² added to both axes); a thresholded
        // footprint cuts the minor axis' wings first, so the measurement may sit somewhat above
        expect(m.elongation!, label).toBeGreaterThan(1.7);
        expect(m.elongation!, label).toBeLessThan(2.5);
        expect(axialDifference(m.elongationAngleDegrees!, f.elongationAngleDegrees!), label).toBeLessThan(10);
      } else if (f.binning === 1) {
        expect(m.elongation!, label).toBeLessThan(1.2);
      }
    });
  });

  it('audit --json puts the detected trail on the injected line: direction within 1 degree, offset within 1.5 px', (ctx) => {
    if (!need(ctx)) return;
    let trails = 0;
    each(({ seed }, f, rec) => {
      const label = `seed ${seed} ${f.file}`;
      if (!f.trail) {
        expect(rec.metrics!.trails, label).toEqual([]);
        return;
      }
      expect(rec.metrics!.trails, label).toHaveLength(1);
      const d = rec.metrics!.trails[0]!;
      expect(axialDifference(d.angleDegrees, f.trail.angleDegrees), `${label}: ${d.angleDegrees} vs ${f.trail.angleDegrees}`).toBeLessThan(1);
      const a = (d.angleDegrees * Math.PI) / 180;
      const offset = Math.abs((f.trail.x - d.x0) * Math.sin(a) - (f.trail.y - d.y0) * Math.cos(a));
      expect(offset, label).toBeLessThan(1.5);
      trails++;
    });
    expect(trails).toBe(SEEDS.length);
  });

  // Finding F3 in docs/findings-independent-night.md: pieces of the trail are counted as stars (about 70 instead of
  // about 37 on the other frames), so a trail hides a loss of stars. Expected to pass once fixed.
  it("audit --json counts the trail frame's stars within 30 % of the clean frames' median", (ctx) => {
    if (!need(ctx)) return;
    for (const { seed, truth, doc } of nights) {
      const cleanMedian = median(truth.frames.filter((f) => f.defects.length === 0).map((f) => recordOf(doc.frames, f.file)!.metrics!.starCount));
      const f = truth.frames.find((x) => x.trail)!;
      const stars = recordOf(doc.frames, f.file)!.metrics!.starCount;
      expect(Math.abs(stars / cleanMedian - 1), `seed ${seed} ${f.file}: ${stars} stars, clean median ${cleanMedian}`).toBeLessThan(0.3);
    }
  });

  // Finding F4 in docs/findings-independent-night.md: the detected trail stops at the last whole 64-px segment, up to
  // 63 px short of the frame edge (lengthPixels 383 for chords of 399-423 px). Expected to pass once fixed.
  it('audit --json reports the trail across its whole chord of the frame, within 10 px', (ctx) => {
    if (!need(ctx)) return;
    for (const { seed, truth, doc } of nights) {
      const f = truth.frames.find((x) => x.trail)!;
      const d = recordOf(doc.frames, f.file)!.metrics!.trails[0]!;
      const chord = chordLength(f.trail!.x, f.trail!.y, f.trail!.angleDegrees, f.width, f.height);
      expect(Math.abs(d.lengthPixels - chord), `seed ${seed} ${f.file}: ${d.lengthPixels} px of a ${chord.toFixed(1)} px chord`).toBeLessThan(10);
    }
  });

  // Finding F5 in docs/findings-independent-night.md: the star signal (median flux of the brightest detected stars, not of
  // the same stars in every frame) reads the cloud's transmission 0.4 as 0.32-1.13 over seeds 1-20 (seed 1: 0.68),
  // and rejects 3 clean frames of seed 17 as cloud. Expected to pass once the signal compares the same stars.
  it.fails("audit --json reads the cloud frame's star signal ratio within 25 % of the true transmission 0.4", (ctx) => {
    if (!need(ctx)) return;
    for (const { seed, truth, doc } of nights) {
      const set = sameSet(truth).filter((f) => f.defects.length === 0);
      const signalMedian = median(set.map((f) => recordOf(doc.frames, f.file)!.metrics!.starSignalAdu!));
      const f = truth.frames.find((x) => x.defects.includes('cloud'))!;
      const ratio = recordOf(doc.frames, f.file)!.metrics!.starSignalAdu! / signalMedian;
      expect(Math.abs(ratio / f.starFluxFactor - 1), `seed ${seed} ${f.file}: star signal ratio ${ratio}, true ${f.starFluxFactor}`).toBeLessThan(0.25);
    }
  });
});

/** Length of the line through (x, y) at `angleDegrees` inside the pixel centres' box [0, w-1] x [0, h-1]. */
function chordLength(x: number, y: number, angleDegrees: number, w: number, h: number): number {
  const ux = Math.cos((angleDegrees * Math.PI) / 180);
  const uy = Math.sin((angleDegrees * Math.PI) / 180);
  let lo = -Infinity;
  let hi = Infinity;
  for (const [p, u, max] of [[x, ux, w - 1], [y, uy, h - 1]] as const) {
    if (Math.abs(u) < 1e-12) continue;
    const a = (0 - p) / u;
    const b = (max - p) / u;
    lo = Math.max(lo, Math.min(a, b));
    hi = Math.min(hi, Math.max(a, b));
  }
  return hi - lo;
}
