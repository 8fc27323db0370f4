import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../helpers/cli.js';
import { pythonWithAstropy, requireOutside } from '../helpers/outside.js';
import { generateNight, recordOf, type NightTruth, type SkyFrameTruth } from './night.js';

// Outside reference: scripts/reference/independent_night.py draws every electron with numpy 1.24's Poisson and
// normal generators and writes the frames with astropy 5.2.1 (Debian python3-numpy, python3-astropy); it shares no
// code with the library or its simulator. The camera is given exactly (--gain/--read-noise/--offset from the truth),
// so these checks test the star-free sky level and the closed forms of REFERENCE.md D.2 (read-noise penalty
// sqrt(1 + σ_R²/B) − 1) and D.3 (shortest sub σ_R² / (b ((1 + p)² − 1))), written out here from the reference.

interface SkySub {
  file: string;
  exposureSeconds: number;
  backgroundAdu: number;
  skyRateElectronsPerSecond: number;
  readNoisePenaltyPercent: number;
  minimumExposureSeconds: number;
  status: 'sky-limited' | 'read-noise-limited';
}
interface SkyDoc {
  schema: string;
  subs: SkySub[];
  filters: { filter: string; recommendedMinimumExposureSeconds: number; rule: string }[];
  unreadable: unknown[];
}

const SEEDS = [1, 2, 3];
const FOLDERS = ['light', 'crowded', 'edge', 'faint'] as const;
const MAX_PENALTY = 0.05; // the CLI default --max-penalty 5 (%)

/** REFERENCE.md D.2: noise increase from read noise for B background electrons per pixel, in percent. */
const penaltyPercent = (backgroundElectrons: number, readNoise: number) => 100 * (Math.sqrt(1 + (readNoise * readNoise) / backgroundElectrons) - 1);
/** REFERENCE.md D.3: shortest sub for a noise increase of at most p, background rate b (e-/px/s). */
const minimumSubSeconds = (readNoise: number, rate: number, p: number) => (readNoise * readNoise) / (rate * ((1 + p) ** 2 - 1));
const relative = (value: number, truth: number) => Math.abs(value / truth - 1);
/** Without a dark current given, `subgauge sky` counts the dark signal as sky (sky/subs.ts): compare with both. */
const backgroundRate = (t: { skyRateElectronsPerSecond: number; darkRateElectronsPerSecond: number }) => t.skyRateElectronsPerSecond + t.darkRateElectronsPerSecond;

interface Night {
  seed: number;
  truth: NightTruth;
  docs: Record<(typeof FOLDERS)[number], SkyDoc>;
}

describe('subgauge sky on nights from the independent numpy/astropy generator', () => {
  const t = tempDir('subgauge-independent-sky-');
  const available = pythonWithAstropy() !== undefined;
  const nights: Night[] = [];
  beforeAll(async () => {
    if (!available) return;
    for (const seed of SEEDS) {
      const dir = path.join(t.dir, `night-${seed}`);
      const truth = generateNight(dir, seed);
      const c = truth.camera;
      const docs = {} as Night['docs'];
      for (const folder of FOLDERS) {
        const r = await runCli(['sky', path.join(dir, folder), '--gain', String(c.gainElectronsPerAdu), '--read-noise', String(c.readNoiseElectrons), '--offset', String(c.offsetAdu), '--json']);
        expect(r.code, r.stderr).toBe(0);
        docs[folder] = JSON.parse(r.stdout) as SkyDoc;
      }
      nights.push({ seed, truth, docs });
    }
  }, 120_000);
  afterAll(() => t.cleanup());

  const need = (ctx: { skip: (note?: string) => void }) => requireOutside('python3 with numpy and astropy', available, ctx);

  it('sky --json measures every clean sub within 2 % of the true sky rate, the penalty within 3 % and the shortest sub within 5 % of REFERENCE.md D.2/D.3', (ctx) => {
    if (!need(ctx)) return;
    let checked = 0;
    for (const { seed, truth, docs } of nights) {
      expect(docs.light.schema).toBe('subgauge.sky/1');
      expect(docs.light.subs).toHaveLength(truth.frames.length);
      const rn = truth.camera.readNoiseElectrons;
      for (const f of truth.frames.filter((x) => x.defects.length === 0)) {
        const rec = recordOf(docs.light.subs, f.file);
        expect(rec, `seed ${seed} ${f.file}`).toBeDefined();
        const label = `seed ${seed} ${f.file}: measured ${rec!.skyRateElectronsPerSecond}, true ${backgroundRate(f)} e-/px/s`;
        expect(relative(rec!.skyRateElectronsPerSecond, backgroundRate(f)), label).toBeLessThan(0.02);
        const truePenalty = penaltyPercent(f.skyElectrons + f.darkElectrons, rn);
        expect(relative(rec!.readNoisePenaltyPercent, truePenalty), `${label}; penalty ${rec!.readNoisePenaltyPercent} vs ${truePenalty} %`).toBeLessThan(0.03);
        const trueMinimum = minimumSubSeconds(rn, backgroundRate(f), MAX_PENALTY);
        expect(relative(rec!.minimumExposureSeconds, trueMinimum), `${label}; shortest sub ${rec!.minimumExposureSeconds} vs ${trueMinimum} s`).toBeLessThan(0.05);
        // the status follows the closed form wherever the true penalty is clearly on one side of the 5 % limit
        if (Math.abs(truePenalty - 5) > 0.3) expect(rec!.status, label).toBe(truePenalty <= 5 ? 'sky-limited' : 'read-noise-limited');
        checked++;
      }
    }
    expect(checked).toBe(SEEDS.length * 17);
  });

  it('sky --json measures the defect subs (cloud, wrong exposure, 2x2 binning, ...) within 3 % of their own true sky rate', (ctx) => {
    if (!need(ctx)) return;
    for (const { seed, truth, docs } of nights) {
      for (const f of truth.frames.filter((x) => x.defects.length > 0)) {
        const rec = recordOf(docs.light.subs, f.file);
        const label = `seed ${seed} ${f.file} (${f.defects}): measured ${rec?.skyRateElectronsPerSecond}, true ${backgroundRate(f)}`;
        expect(relative(rec!.skyRateElectronsPerSecond, backgroundRate(f)), label).toBeLessThan(0.03);
        expect(rec!.exposureSeconds).toBe(f.exposureSeconds);
      }
    }
  });

  it('sky --json recommends the shortest sub of REFERENCE.md D.3 for the darker half of the true sky rates, within 5 %', (ctx) => {
    if (!need(ctx)) return;
    for (const { seed, truth, docs } of nights) {
      expect(docs.light.filters).toHaveLength(1);
      const summary = docs.light.filters[0]!;
      expect(summary).toMatchObject({ filter: 'L', rule: 'darker-half' });
      // darker-half rule (sky/subs.ts recommendationRate): the median of the darker half of the subs' rates
      const rates = truth.frames.map(backgroundRate).sort((a, b) => a - b);
      const darker = rates.slice(0, Math.ceil(rates.length / 2));
      const m = darker.length;
      const rate = m % 2 ? darker[(m - 1) / 2]! : (darker[m / 2 - 1]! + darker[m / 2]!) / 2;
      const expected = minimumSubSeconds(truth.camera.readNoiseElectrons, rate, MAX_PENALTY);
      expect(relative(summary.recommendedMinimumExposureSeconds, expected), `seed ${seed}: ${summary.recommendedMinimumExposureSeconds} vs ${expected} s`).toBeLessThan(0.05);
    }
  });

  it('sky --json on crowded frames with a 40 % gradient keeps the sky within 2 % of the known sky although the stars add over 5 % to the mean', (ctx) => {
    if (!need(ctx)) return;
    let checked = 0;
    for (const { seed, truth, docs } of nights) {
      for (const f of truth.crowded) {
        // the generator's own record of the star light: a mean over the frame would be this much too high
        expect(f.starRateElectronsPerSecond! / f.skyRateElectronsPerSecond).toBeGreaterThan(0.05);
        const rec = recordOf(docs.crowded.subs, f.file);
        const label = `seed ${seed} ${f.file}: measured ${rec?.skyRateElectronsPerSecond}, true ${backgroundRate(f)}, star light ${f.starRateElectronsPerSecond}`;
        const error = relative(rec!.skyRateElectronsPerSecond, backgroundRate(f));
        expect(error, label).toBeLessThan(0.02);
        // and less than half of what the stars would add to a mean
        expect(error, label).toBeLessThan(0.5 * (f.starRateElectronsPerSecond! / f.skyRateElectronsPerSecond));
        checked++;
      }
    }
    expect(checked).toBe(SEEDS.length * 2);
  });

  // Was finding F1 (the median over mesh boxes leant towards the partial edge boxes under a gradient); the level is
  // now the plane through the box levels at the frame centre (packages/core/src/sky/background.ts).
  it('sky --json on a star-free frame with a 40 % gradient along one axis measures the frame mean sky within 1 %', (ctx) => {
    if (!need(ctx)) return;
    const worst = worstRelative(nights, 'edge');
    expect(worst.error, worst.label).toBeLessThan(0.01);
  });

  // Finding F2: the sky level was resolved to whole ADU (medians of integer data), ±11 % at 4.5 ADU. With clipped box
  // means and the plane at the frame centre the worst case over seeds 1-3 is +2.3 % (+0.1 ADU at 4.5 ADU, a small
  // bias of the 3-sigma clip on a skewed Poisson + read-noise distribution): still above the 2 % bar, so it stays open.
  it.fails('sky --json on a narrowband-like sky of 4.5-7.5 ADU measures each sub within 2 % of the true sky rate', (ctx) => {
    if (!need(ctx)) return;
    const worst = worstRelative(nights, 'faint');
    expect(worst.error, worst.label).toBeLessThan(0.02);
  });
});

function worstRelative(nights: readonly Night[], folder: 'edge' | 'faint'): { error: number; label: string } {
  let error = 0;
  let label = '';
  for (const { seed, truth, docs } of nights) {
    for (const f of truth[folder] as SkyFrameTruth[]) {
      const rec = recordOf(docs[folder].subs, f.file);
      expect(rec, f.file).toBeDefined();
      const e = relative(rec!.skyRateElectronsPerSecond, backgroundRate(f));
      if (e >= error) {
        error = e;
        label = `seed ${seed} ${f.file}: measured ${rec!.skyRateElectronsPerSecond} (${rec!.backgroundAdu} ADU), true ${backgroundRate(f)} e-/px/s`;
      }
    }
  }
  return { error, label };
}
