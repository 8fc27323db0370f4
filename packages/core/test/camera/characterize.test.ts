import { describe, expect, it } from 'vitest';
import { characterizeCamera, measureBiasFrame, screenCameraFrames, screenFlatFrame } from '../../src/camera/characterize.js';
import { cameraProfileFromResult, parseCameraProfile } from '../../src/camera/profile.js';
import { SMALL_CAMERA, synthFrames, synthSet } from './synth.js';
import { headerFrom } from './helpers.js';

// Seeded TypeScript frame sets (64 x 64, g = 2 e-/ADU, σ_R = 5 e-) passed through encodeFits/parseFits. With
// 4096 pixels a level's variance has a 2.2 % standard error (REFERENCE B.11), hence the loose tolerances here;
// accuracy is checked against the independent numpy generator in independentCamera.test.ts.
const LEVELS = [2000, 5000, 10000, 15000, 20000, 25000, 30000];

describe('characterizeCamera on small seeded sets', () => {
  it('characterizeCamera(bias + flats + darks) recovers gain, read noise and dark current within their errors', () => {
    const r = characterizeCamera(synthSet(SMALL_CAMERA, LEVELS, { darks: [100, 300] }), { tiles: { x: 2, y: 2 } });
    expect(r.schema).toBe('subgauge.camera/1');
    expect(Math.abs(r.gainElectronsPerAdu - 2) / 2).toBeLessThan(0.05);
    expect(Math.abs(r.gainElectronsPerAdu - 2)).toBeLessThan(4 * r.gainUncertaintyElectronsPerAdu);
    expect(Math.abs(r.readNoiseElectrons - 5) / 5).toBeLessThan(0.06);
    expect(Math.abs(r.offsetAdu - 200)).toBeLessThanOrEqual(1);
    expect(Math.abs(r.darkCurrentElectronsPerSecond! - 0.5) / 0.5).toBeLessThan(0.1);
    expect(r.quantization.stepAdu).toBe(1);
    expect(r.channels).toBeNull();
    expect(r.curve).toHaveLength(LEVELS.length);
    expect(r.frames.used).toHaveLength(2 + 2 * LEVELS.length + 4);
    expect(r.frames.leftOut).toEqual([]);
    expect(r.fullWell.reached).toBe(false);
    expect(r.diagnostics.map((d) => d.code)).toContain('CAMERA_FULL_WELL_NOT_REACHED');
    expect(JSON.parse(JSON.stringify(r)).gainElectronsPerAdu).toBe(r.gainElectronsPerAdu);
  });
  it('characterizeCamera(one flat pair) falls back to the two-flat/two-bias formula with its B.11 error', () => {
    const r = characterizeCamera(synthSet(SMALL_CAMERA, [20000]));
    expect(r.fit).toBeNull();
    expect(r.curve[0]!.inFit).toBe(true);
    expect(r.gainElectronsPerAdu).toBe(r.curve[0]!.gainElectronsPerAdu);
    expect(Math.abs(r.gainElectronsPerAdu - 2)).toBeLessThan(4 * r.gainUncertaintyElectronsPerAdu);
    expect(r.diagnostics.map((d) => d.code)).toContain('CAMERA_SINGLE_FLAT_LEVEL');
  });
  it('characterizeCamera(flats with mismatched levels) leaves the pair out as level-mismatch', () => {
    const frames = synthFrames(SMALL_CAMERA, [
      { kind: 'Bias Frame', electrons: 0, exposureSeconds: 0 }, { kind: 'Bias Frame', electrons: 0, exposureSeconds: 0 },
      ...LEVELS.flatMap((l) => [{ kind: 'Flat Field', electrons: l, exposureSeconds: l / 1e4 }, { kind: 'Flat Field', electrons: l, exposureSeconds: l / 1e4 }]),
      { kind: 'Flat Field', electrons: 12000, exposureSeconds: 5 }, { kind: 'Flat Field', electrons: 13000, exposureSeconds: 5 },
    ]);
    const r = characterizeCamera(frames);
    const odd = r.curve.find((c) => c.exposureSeconds === 5)!;
    expect(odd.excludedBecause).toBe('level-mismatch');
    expect(r.frames.leftOut.filter((l) => l.reason === 'level-mismatch')).toHaveLength(2);
  });
  it('characterizeCamera(flats past the ADC maximum) detects the clip level, leaves saturated flats out and finds an ADC-limited full well', () => {
    const cam = { ...SMALL_CAMERA, adcMaxAdu: 16383, fullWellElectrons: 1e6 };
    const r = characterizeCamera(synthSet(cam, [2000, 5000, 8000, 12000, 16000, 20000, 24000, 28000, 31000, 33000, 36000]), { tiles: { x: 2, y: 2 } });
    expect(r.data).toMatchObject({ adcMaxAdu: 16383, adcMaxSource: 'detected' });
    expect(r.fullWell.reached).toBe(true);
    expect(r.fullWellLimitedBy).toBe('adc');
    const truth = (16383 - 200) * 2;
    expect(Math.abs(r.fullWellElectrons - truth) / truth).toBeLessThan(0.1);
    expect(r.frames.leftOut.some((l) => l.reason === 'saturated')).toBe(true);
    expect(r.curve.filter((c) => c.saturated).every((c) => !c.inFit)).toBe(true);
  });
  it('characterizeCamera(colour frames) measures the four CFA channels and combines their gains', () => {
    const cam = { ...SMALL_CAMERA, bayer: 'RGGB' };
    const r = characterizeCamera(synthSet(cam, LEVELS), { tiles: { x: 2, y: 2 } });
    expect(Object.keys(r.channels!)).toEqual(['R', 'G1', 'G2', 'B']);
    for (const c of Object.values(r.channels!)) expect(Math.abs(c.gainElectronsPerAdu - 2) / 2).toBeLessThan(0.08);
    expect(r.cfa!.pattern).toBe('RGGB');
    const g = Object.values(r.channels!).map((c) => c.gainElectronsPerAdu);
    expect(r.gainElectronsPerAdu).toBeGreaterThanOrEqual(Math.min(...g));
    expect(r.gainElectronsPerAdu).toBeLessThanOrEqual(Math.max(...g));
    expect(r.channels!.R.planeOffset).toEqual({ x: 0, y: 0 });
    expect(r.channels!.B.planeOffset).toEqual({ x: 1, y: 1 });
  });
});

describe('characterizeCamera refuses sets it cannot measure', () => {
  const bias = (file: string, w = 64) => synthFrames({ ...SMALL_CAMERA, width: w }, [{ kind: 'Bias Frame', electrons: 0, exposureSeconds: 0, file }])[0]!;
  it('characterizeCamera(one flat) throws INPUT_TOO_FEW_FLAT_PAIRS', () => {
    const frames = [bias('b1.fits'), bias('b2.fits'), ...synthFrames(SMALL_CAMERA, [{ kind: 'Flat Field', electrons: 1e4, exposureSeconds: 1 }])];
    expect(() => characterizeCamera(frames)).toThrowError(expect.objectContaining({ name: 'InvalidInputError', code: 'INPUT_TOO_FEW_FLAT_PAIRS' }));
  });
  it('characterizeCamera(flats without a bias pair) throws INPUT_NO_BIAS_PAIR', () => {
    const frames = synthSet(SMALL_CAMERA, LEVELS).filter((f) => f.header.string('IMAGETYP') !== 'Bias Frame');
    expect(() => characterizeCamera([...frames, bias('b1.fits')])).toThrowError(expect.objectContaining({ code: 'INPUT_NO_BIAS_PAIR' }));
  });
  it('characterizeCamera(biases of another size) throws INPUT_SHAPE_MISMATCH', () => {
    const frames = synthSet(SMALL_CAMERA, LEVELS).filter((f) => f.header.string('IMAGETYP') !== 'Bias Frame');
    expect(() => characterizeCamera([...frames, bias('b1.fits', 32), bias('b2.fits', 32)])).toThrowError(expect.objectContaining({ code: 'INPUT_SHAPE_MISMATCH' }));
  });
  it('characterizeCamera(BSCALE = 2 data) throws INPUT_SCALED_DATA naming the file (REFERENCE F.1)', () => {
    const frames = synthSet(SMALL_CAMERA, [10000, 20000]);
    // encodeFits writes BSCALE itself, so the scaled pair gets a hand-made header (the check reads the header)
    const [p1, p2] = synthFrames(SMALL_CAMERA, [1, 2].map(() => ({ kind: 'Flat Field', electrons: 1000, exposureSeconds: 0.1 })));
    const header = headerFrom({ IMAGETYP: 'Flat Field', EXPTIME: 0.1, BSCALE: 2 });
    const scaled = { file: 'scaled.fits', header, image: p1!.image };
    const s2 = { file: 'scaled2.fits', header, image: p2!.image };
    expect(() => characterizeCamera([...frames, scaled, s2])).toThrowError(expect.objectContaining({ code: 'INPUT_SCALED_DATA', where: { file: 'scaled.fits' } }));
  });
  it('characterizeCamera(floats normalised to 0..1) throws INPUT_SCALED_DATA unless dataScaleAduPerUnit is given', () => {
    const frames = synthSet(SMALL_CAMERA, LEVELS, { float: true });
    expect(() => characterizeCamera(frames)).toThrowError(expect.objectContaining({ code: 'INPUT_SCALED_DATA' }));
    const r = characterizeCamera(frames, { dataScaleAduPerUnit: 65535, tiles: { x: 2, y: 2 } });
    expect(Math.abs(r.gainElectronsPerAdu - 2) / 2).toBeLessThan(0.06);
    expect(r.data.dataScaleAduPerUnit).toBe(65535);
  });
  it('characterizeCamera(…, {region}) outside the frame throws INPUT_OUT_OF_BOUNDS', () => {
    expect(() => characterizeCamera(synthSet(SMALL_CAMERA, [10000, 20000]), { region: { x: 40, y: 0, width: 40, height: 10 } }))
      .toThrowError(expect.objectContaining({ code: 'INPUT_OUT_OF_BOUNDS' }));
  });
  it('screenCameraFrames(frames) reports a lone saturated flat as saturated, not just unpaired', () => {
    const cam = { ...SMALL_CAMERA, adcMaxAdu: 4095 };
    const frames = synthFrames(cam, [{ kind: 'Flat Field', electrons: 30000, exposureSeconds: 3, file: 'hot.fits' }]);
    const s = screenCameraFrames(frames);
    expect(s.leftOut).toEqual([{ file: 'hot.fits', kind: 'flat', reason: 'saturated', detail: 'unpaired' }]);
    expect(s.flats[0]!.adcMaxAdu).toBe(4095);
  });
});

describe('camera profile', () => {
  const result = characterizeCamera(synthSet(SMALL_CAMERA, LEVELS, { darks: [100, 300] }), { tiles: { x: 2, y: 2 } });
  it('cameraProfileFromResult(result) survives JSON and parseCameraProfile unchanged', () => {
    const profile = cameraProfileFromResult(result);
    expect(profile).toMatchObject({ schema: 'subgauge.camera-profile/1', gainElectronsPerAdu: result.gainElectronsPerAdu, fullWellElectrons: null, quantizationStepAdu: 1 });
    expect(parseCameraProfile(JSON.parse(JSON.stringify(profile)))).toEqual(profile);
  });
  it('parseCameraProfile(bad documents) throws INPUT_BAD_PROFILE naming the field', () => {
    const good = JSON.parse(JSON.stringify(cameraProfileFromResult(result)));
    const cases: [Record<string, unknown>, string][] = [
      [{ ...good, schema: 'subgauge.camera/1' }, 'schema'],
      [{ ...good, gainElectronsPerAdu: -1 }, 'gainElectronsPerAdu'],
      [{ ...good, readNoiseElectrons: 'x' }, 'readNoiseElectrons'],
      [{ ...good, settings: { ...good.settings, binning: { x: 1.5, y: 1 } } }, 'settings.binning'],
      [{ ...good, channels: { Q: {} } }, 'channels.Q'],
      [{ ...good, channels: { R: { gainElectronsPerAdu: 1, readNoiseElectrons: 2 } } }, 'channels.R.offsetAdu'],
    ];
    for (const [doc, field] of cases) {
      expect(() => parseCameraProfile(doc)).toThrowError(expect.objectContaining({ code: 'INPUT_BAD_PROFILE', where: { keyword: field } }));
    }
    expect(() => parseCameraProfile(null)).toThrowError(expect.objectContaining({ code: 'INPUT_BAD_PROFILE' }));
  });
});

describe('characterizeCamera details', () => {
  it('characterizeCamera(flats with matching flat-darks) subtracts the flat-dark pair of the same exposure', () => {
    const cam = { ...SMALL_CAMERA, darkElectronsPerSecond: 20 };
    const specs = [
      { kind: 'Bias Frame', electrons: 0, exposureSeconds: 0 }, { kind: 'Bias Frame', electrons: 0, exposureSeconds: 0 },
      ...LEVELS.flatMap((l) => [1, 2].map(() => ({ kind: 'Flat Field', electrons: l, exposureSeconds: 10 + l / 1000 }))),
      ...LEVELS.flatMap((l) => [1, 2].map(() => ({ kind: 'Dark Flat', electrons: 0, exposureSeconds: 10 + l / 1000 }))),
    ];
    const r = characterizeCamera(synthFrames(cam, specs), { tiles: { x: 2, y: 2 } });
    expect(r.curve.every((c) => c.reference === 'flat-dark')).toBe(true);
    // the dark signal (20 e-/s x 10-40 s) is removed: signal ≈ level / g
    for (const c of r.curve) expect(Math.abs(c.signalAdu - (c.exposureSeconds! - 10) * 1000 / 2) / c.signalAdu).toBeLessThan(0.02);
    expect(Math.abs(r.gainElectronsPerAdu - 2) / 2).toBeLessThan(0.05);
  });
  it('measureBiasFrame(frame with row offsets) reports row noise and no column noise', () => {
    const w = 256, h = 256;
    const [b] = synthFrames({ ...SMALL_CAMERA, width: w, height: h }, [{ kind: 'Bias Frame', electrons: 0, exposureSeconds: 0 }]);
    const px = b!.image.pixels as Uint16Array;
    for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) px[y * w + x] = px[y * w + x]! + (y % 2 === 0 ? 3 : -3);
    const m = measureBiasFrame(b!);
    expect(Math.abs(m.rowNoiseAdu - 3) / 3).toBeLessThan(0.05);
    expect(m.columnNoiseAdu).toBeLessThan(0.3);
    expect(m.quantizationStepAdu).toBe(1);
    expect(Math.abs(m.offsetAdu - 200)).toBeLessThanOrEqual(1);
  });
  it('screenFlatFrame(frame, {adcMaxAdu}) counts pixels at or above the given maximum', () => {
    const [f] = synthFrames({ ...SMALL_CAMERA, adcMaxAdu: 3000 }, [{ kind: 'Flat Field', electrons: 10000, exposureSeconds: 1 }]);
    expect(screenFlatFrame(f!, { adcMaxAdu: 3000 })).toMatchObject({ saturated: true, adcMaxAdu: 3000 });
    expect(screenFlatFrame(f!, { adcMaxAdu: 3000 }).fractionAtMaximum).toBeGreaterThan(0.99);
    expect(screenFlatFrame(f!, { adcMaxAdu: 60000 })).toMatchObject({ saturated: false, fractionAtMaximum: 0 });
  });
});
