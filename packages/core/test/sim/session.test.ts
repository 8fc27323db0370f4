import { describe, expect, it } from 'vitest';
import {
  DEFECT_REASONS,
  KESTREL_M14,
  bayerChannelAt,
  distanceFromTrail,
  expectedFlatStats,
  simulateSession,
  type CameraModel,
  type FrameTruth,
  type RenderedFrame,
  type SimulatedFrame,
} from '../../src/sim/index.js';

const Z = 5;
const card = (r: RenderedFrame, k: string) => r.cards.find((c) => c.keyword === k)?.value;

function median(values: ArrayLike<number>): number {
  const a = Float64Array.from(values).sort();
  return a[a.length >> 1] ?? Number.NaN;
}

describe('simulateSession', () => {
  const kestrel = simulateSession({ seed: 3 });
  const wren = simulateSession({ preset: 'wren-c12', seed: 3 });

  it('simulateSession() plans bias, dark, flat pairs and lights with unique relative file names', () => {
    const c = kestrel.truth.counts;
    expect(c.bias).toBeGreaterThanOrEqual(4);
    expect(c.bias % 2).toBe(0);
    expect(c.dark).toBe(2 * 3 * 2); // 3 exposures x 2 temperatures, pairs
    expect(c.flat).toBe(24);
    expect(c.light).toBe(20);
    const files = kestrel.frames.map((f) => f.file);
    expect(new Set(files).size).toBe(files.length);
    expect(files).toContain('bias/bias_001.fits');
    expect(files).toContain('light/light_020.fits');
    for (const f of files) expect(f).toMatch(/^(bias|dark|flat|flat-dark|light)\/[a-z_]+_\d{3}\.fits$/);
    const withDarks = simulateSession({ flatDarks: true, biasPairs: 2 });
    expect(withDarks.truth.counts['flat-dark']).toBe(24);
    expect(withDarks.truth.counts.bias).toBe(4);
  });

  it('simulateSession() takes flats from about 5 % to past saturation under constant illumination', () => {
    const flats = kestrel.truth.frames.filter((f) => f.kind === 'flat');
    const sat = kestrel.truth.derived.saturation.electrons;
    const levels = flats.map((f) => f.signalElectrons / sat);
    expect(Math.min(...levels)).toBeLessThan(0.06);
    expect(Math.max(...levels)).toBeGreaterThan(1.05);
    expect(new Set(flats.map((f) => f.exposureSeconds)).size).toBe(12);
    for (const f of flats) expect(f.signalElectrons).toBeCloseTo(kestrel.truth.flat.illuminationElectronsPerSecond * f.exposureSeconds, 6);
    // Pair members share exposure and temperature.
    for (let i = 0; i < flats.length; i += 2) {
      expect(flats[i]?.pair).toBe(flats[i + 1]?.pair);
      expect(flats[i]?.exposureSeconds).toBe(flats[i + 1]?.exposureSeconds);
      expect(flats[i]?.temperatureC).toBe(flats[i + 1]?.temperatureC);
    }
  });

  it('simulateSession() dates frames in order, at least EXPTIME apart (REFERENCE.md F.8)', () => {
    const t = kestrel.truth.frames.map((f) => Date.parse(`${f.dateObs}Z`));
    for (let i = 1; i < t.length; i++) {
      const prev = kestrel.truth.frames[i - 1] as FrameTruth;
      expect((t[i] ?? 0) - (t[i - 1] ?? 0)).toBeGreaterThanOrEqual(prev.exposureSeconds * 1000);
    }
    expect(kestrel.truth.frames[0]?.dateObs).toBe('2031-10-04T20:15:00.000');
  });

  it('simulateSession() truth is plain JSON and lists every camera and defect parameter', () => {
    const t = kestrel.truth;
    expect(JSON.parse(JSON.stringify(t))).toEqual(t);
    for (const key of Object.keys(KESTREL_M14) as (keyof CameraModel)[]) expect(t.camera[key], key).not.toBeUndefined();
    expect(t.hotPixels.length).toBe(KESTREL_M14.hotPixels.count);
    expect(t.scene.stars.list.length).toBe(t.scene.stars.count);
    const kinds = new Set<string>();
    for (const f of t.frames) {
      for (const [k, v] of Object.entries(f)) expect(v, `${f.file} ${k}`).not.toBeUndefined();
      for (const d of f.defects) {
        kinds.add(d.kind);
        for (const [k, v] of Object.entries(d)) expect(typeof v === 'number' ? Number.isFinite(v) : v !== undefined, `${d.kind}.${k}`).toBe(true);
      }
      expect(f.expectedReasons).toEqual([...new Set(f.defects.flatMap((d) => DEFECT_REASONS[d.kind]))]);
    }
    expect([...kinds].sort()).toEqual(Object.keys(DEFECT_REASONS).sort());
  });

  it('simulateSession() writes the usual header keywords with the true values', () => {
    for (const s of [kestrel, wren]) {
      for (const f of s.frames.filter((_, i) => i % 7 === 0)) {
        const r = f.render();
        const t = f.truth;
        expect(card(r, 'IMAGETYP')).toBe(t.imageType);
        expect(card(r, 'EXPTIME')).toBe(t.exposureSeconds);
        expect(card(r, 'DATE-OBS')).toBe(t.dateObs);
        expect(card(r, 'CCD-TEMP')).toBe(t.temperatureC);
        expect(card(r, 'SET-TEMP')).toBe(t.setTemperatureC);
        expect(card(r, 'GAIN')).toBe(t.gainSetting);
        expect(card(r, 'XBINNING')).toBe(t.binning);
        expect(card(r, 'INSTRUME')).toBe(s.truth.camera.name);
        expect(card(r, 'ROWORDER')).toBe('TOP-DOWN');
        expect(r.width * r.height).toBe(r.pixels.length);
        expect([r.width, r.height]).toEqual([t.width, t.height]);
        if (t.kind === 'light') expect(card(r, 'OBJECT')).toBe(s.truth.site.target);
      }
    }
    const colour = wren.frames[0]?.render();
    expect(colour && card(colour, 'BAYERPAT')).toBe('RGGB');
    expect(kestrel.frames[0]?.render().cards.some((c) => c.keyword === 'BAYERPAT')).toBe(false);
    expect(wren.truth.frames.map((f) => f.imageType)).toContain('BIAS');
  });

  it('simulateSession() applies header-level defects: warm sensor, exposure, binning, gain', () => {
    const byKind = (k: string) => kestrel.frames.find((f) => f.truth.defects.some((d) => d.kind === k)) as SimulatedFrame;
    const clean = kestrel.frames.find((f) => f.kind === 'light' && f.truth.defects.length === 0) as SimulatedFrame;
    const warm = byKind('warm-sensor').truth;
    expect(warm.temperatureC - warm.setTemperatureC).toBeGreaterThan(3);
    expect(warm.darkCurrentElectronsPerSecond).toBeGreaterThan(1.5 * clean.truth.darkCurrentElectronsPerSecond);
    expect(byKind('wrong-exposure').truth.exposureSeconds).toBe(clean.truth.exposureSeconds / 2);
    const binned = byKind('other-binning').render();
    expect([binned.width, binned.height]).toEqual([256, 192]);
    expect(card(binned, 'XPIXSZ')).toBeCloseTo(2 * KESTREL_M14.pixelSizeMicrons, 9);
    const gain = byKind('other-gain').truth;
    expect(gain.gainSetting).not.toBe(clean.truth.gainSetting);
    expect(gain.gainElectronsPerAdu).toBe(KESTREL_M14.gainElectronsPerAdu / 2);
  });

  it('frame.render() is deterministic for a seed and differs across seeds', () => {
    const other = simulateSession({ seed: 4 });
    for (const i of [0, 25, kestrel.frames.length - 1]) {
      const a = kestrel.frames[i]?.render().pixels;
      const b = kestrel.frames[i]?.render().pixels;
      const c = other.frames[i]?.render().pixels;
      expect(a).toEqual(b);
      expect(a).not.toEqual(c);
    }
    expect(simulateSession({ seed: 3 }).truth).toEqual(kestrel.truth);
  });

  it('a simulated flat pair matches expectedFlatStats for the Kestrel M14 and for Wren C12 green pixels', () => {
    for (const s of [kestrel, wren]) {
      const flats = s.frames.filter((f) => f.kind === 'flat');
      const camera = s.truth.camera;
      const first = flats[8] as SimulatedFrame;
      const second = flats[9] as SimulatedFrame;
      const a = first.render().pixels;
      const b = second.render().pixels;
      const t = first.truth;
      const w = t.width;
      const hot = new Set(s.truth.hotPixels.map((h) => h.y * w + h.x));
      // Central region avoids amp glow at the right edge; hot pixels excluded.
      const keep = (i: number) => {
        const x = i % w;
        if (x > w - 150 || hot.has(i)) return false;
        return !camera.bayer || bayerChannelAt(camera.bayer.pattern, x, Math.floor(i / w)) === 'G';
      };
      let n = 0;
      let sm = 0;
      let sd = 0;
      for (let i = 0; i < a.length; i++) {
        if (!keep(i)) continue;
        n++;
        sm += ((a[i] ?? 0) + (b[i] ?? 0)) / 2;
        sd += (a[i] ?? 0) - (b[i] ?? 0);
      }
      const mean = sm / n;
      const md = sd / n;
      let vm = 0;
      let v = 0;
      let vv = 0;
      for (let i = 0; i < a.length; i++) {
        if (!keep(i)) continue;
        vm += (((a[i] ?? 0) + (b[i] ?? 0)) / 2 - mean) ** 2;
        const d = ((a[i] ?? 0) - (b[i] ?? 0) - md) ** 2 / 2;
        v += d;
        vv += d * d;
      }
      const e = expectedFlatStats(camera, t.channelSignalElectrons?.G ?? t.signalElectrons, {
        darkElectrons: t.darkCurrentElectronsPerSecond * t.exposureSeconds,
      });
      expect(Math.abs(mean - e.meanAdu)).toBeLessThan(Z * Math.sqrt(vm / n / n));
      expect(Math.abs(v / n - e.temporalVarianceAdu2)).toBeLessThan(Z * Math.sqrt((vv / n - (v / n) ** 2) / n));
    }
  });

  it('simulateSession() truth.expected gives every flat pair per channel and matches a simulated dark pair', () => {
    expect(kestrel.truth.expected.flatPairs.length).toBe(12);
    expect(wren.truth.expected.flatPairs.length).toBe(36);
    expect(new Set(wren.truth.expected.flatPairs.map((p) => p.channel))).toEqual(new Set(['R', 'G', 'B']));
    expect(kestrel.truth.expected.bias.meanAdu).toBeCloseTo(KESTREL_M14.offsetAdu, 6);
    expect(kestrel.truth.expected.darkPairs.length).toBe(6);
    const last = kestrel.truth.expected.darkPairs[2];
    if (!last) throw new Error('missing dark pair');
    const pair = kestrel.frames.filter((f) => f.kind === 'dark' && f.truth.pair === last.pair);
    expect(pair.length).toBe(2);
    const a = pair[0]?.render().pixels ?? new Uint16Array();
    const b = pair[1]?.render().pixels ?? new Uint16Array();
    const w = kestrel.truth.camera.width;
    const hot = new Set(kestrel.truth.hotPixels.map((h) => h.y * w + h.x));
    let n = 0;
    let sum = 0;
    let sum2 = 0;
    for (let i = 0; i < a.length; i++) {
      if (hot.has(i)) continue;
      const m = ((a[i] ?? 0) + (b[i] ?? 0)) / 2;
      n++;
      sum += m;
      sum2 += m * m;
    }
    const mean = sum / n;
    const se = Math.sqrt((sum2 / n - mean * mean) / n);
    expect(Math.abs(mean - last.meanAdu)).toBeLessThan(Z * se);
    expect(last.meanAdu - kestrel.truth.expected.bias.meanAdu).toBeCloseTo(last.darkElectrons / KESTREL_M14.gainElectronsPerAdu, 3);
  });

  it('a simulated light carries the star flux of the truth (stars minus no stars, Kestrel M14)', () => {
    const opts = { seed: 9, noDefects: true, starFluxRange: { minElectronsPerSecond: 50, maxElectronsPerSecond: 250 } };
    const withStars = simulateSession(opts);
    const noStars = simulateSession({ ...opts, starCount: 0 });
    const a = withStars.frames[0] as SimulatedFrame;
    const b = noStars.frames[0] as SimulatedFrame;
    expect(a.truth.ditherPixels).toEqual({ x: 0, y: 0 });
    const pa = a.render().pixels;
    const pb = b.render().pixels;
    let diff = 0;
    let var2 = 0;
    for (let i = 0; i < pa.length; i++) {
      const d = (pa[i] ?? 0) - (pb[i] ?? 0);
      diff += d;
      var2 += (pb[i] ?? 0) - KESTREL_M14.offsetAdu; // ≈ background signal in ADU, for the noise estimate
    }
    const g = KESTREL_M14.gainElectronsPerAdu;
    const t = a.truth.exposureSeconds;
    const flux = withStars.truth.scene.stars.totalFluxElectronsPerSecond;
    // Noise of the summed difference: both frames' shot + read noise, ≈ √(2 Σ (signal e- + σ_R²)) / g ADU.
    const sigma = Math.sqrt(2 * (var2 * g + pa.length * KESTREL_M14.readNoiseElectrons ** 2) + flux * t) / g;
    expect(Math.abs(diff - (flux * t) / g)).toBeLessThan(Z * sigma + 0.002 * (flux * t) / g);
  });

  it('a simulated trail frame is bright along the trail line only', () => {
    const f = kestrel.frames.find((fr) => fr.truth.defects.some((d) => d.kind === 'trail')) as SimulatedFrame;
    const trail = f.truth.defects.find((d) => d.kind === 'trail');
    if (!trail || trail.kind !== 'trail') throw new Error('no trail');
    const r = f.render();
    const on: number[] = [];
    const off: number[] = [];
    for (let i = 0; i < r.pixels.length; i++) {
      const d = distanceFromTrail(trail, i % r.width, Math.floor(i / r.width));
      if (d < 0.4) on.push(r.pixels[i] ?? 0);
      else if (d > 8) off.push(r.pixels[i] ?? 0);
    }
    const g = f.truth.gainElectronsPerAdu;
    const excess = median(on) - median(off);
    // Centre-line pixels (d < 0.4 px) receive at least exp(-0.4²/(2σ_w²)) = 0.82 of the peak.
    expect(excess).toBeGreaterThan((0.8 * trail.peakElectrons) / g);
    expect(excess).toBeLessThan((1.05 * trail.peakElectrons) / g);
    expect(on.length).toBeGreaterThan(200);
  });

  it('simulateSession(options) rejects unknown presets and bad sizes with INPUT_BAD_PARAMETER', () => {
    expect(() => simulateSession({ preset: 'nope' })).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
    expect(() => simulateSession({ width: 10 })).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
    expect(() => simulateSession({ flatLevels: [0.5, -1] })).toThrow(expect.objectContaining({ code: 'INPUT_BAD_PARAMETER' }));
  });

  it('simulateSession({ width, height }) scales hot pixels and stars with the area', () => {
    const s = simulateSession({ width: 256, height: 192, noDefects: true });
    expect(s.truth.hotPixels.length).toBe(15);
    expect(s.truth.scene.stars.count).toBe(38);
    expect(s.truth.frames.every((f) => f.defects.length === 0)).toBe(true);
    const r = s.frames[0]?.render();
    expect(r?.pixels.length).toBe(256 * 192);
  });
});
