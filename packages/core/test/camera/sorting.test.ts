import { describe, expect, it } from 'vitest';
import { cameraFrameKind, cameraFrameSettings, parseDateObs } from '../../src/camera/frameHeader.js';
import { globMatch } from '../../src/camera/glob.js';
import { sortCameraFrames } from '../../src/camera/sortFrames.js';
import type { CameraFrame } from '../../src/camera/sortFrames.js';
import { detectQuantizationStep, combineQuantizationSteps } from '../../src/camera/quantization.js';
import type { CardValue } from '../../src/fits/types.js';
import { headerFrom, imageFrom } from './helpers.js';

const frame = (file: string, cards: Record<string, CardValue>, w = 4, h = 4): CameraFrame =>
  ({ file, header: headerFrom(cards), image: imageFrom(new Uint16Array(w * h), w, h) });

describe('frame kinds', () => {
  it('cameraFrameKind(header) reads IMAGETYP, then OBSTYPE, FRAME, FRAMETYP and the ESO HIERARCH types, skipping unknown values', () => {
    expect(cameraFrameKind(headerFrom({ OBSTYPE: 'zero' }))).toEqual({ kind: 'bias', keyword: 'OBSTYPE' });
    expect(cameraFrameKind(headerFrom({ FRAMETYP: 'Flat' }))).toEqual({ kind: 'flat', keyword: 'FRAMETYP' });
    expect(cameraFrameKind(headerFrom({ 'ESO OBS TYPE': 'BIAS' }))).toEqual({ kind: 'bias', keyword: 'ESO OBS TYPE' });
    expect(cameraFrameKind(headerFrom({ IMAGETYP: 'weird', FRAME: 'Dark' }))).toEqual({ kind: 'dark', keyword: 'FRAME' });
    expect(cameraFrameKind(headerFrom({ OBJECT: 'flat' }))).toEqual({ kind: 'unknown', keyword: null });
    expect(cameraFrameKind(headerFrom({ IMAGETYP: 'Dark Flat Frame' }))).toEqual({ kind: 'flat-dark', keyword: 'IMAGETYP' });
  });
  it('cameraFrameSettings(header) reads exposure, binning from CCDSUM, temperature, CFA pattern and DATE-OBS as UTC', () => {
    const s = cameraFrameSettings(headerFrom({
      EXPOSURE: 30, CCDSUM: '2 2', 'CCD-TEMP': -9.7, BAYERPAT: 'rggb', 'DATE-OBS': '2024-03-01T21:05:33.123', GAIN: 120, FILTER: ' Ha ',
    }));
    expect(s).toMatchObject({ exposureSeconds: 30, binning: { x: 2, y: 2 }, temperatureCelsius: -9.7, bayerPattern: 'RGGB', gainSetting: 120, filter: 'Ha' });
    // REFERENCE G row 20: this DATE-OBS is MJD 60370.87885559028
    expect(Math.abs(s.timeMs! / 86400000 + 40587 - 60370.87885559028)).toBeLessThan(1e-9);
    expect(parseDateObs('01/01/00')).toBeNull();
    expect(parseDateObs('2024-03-01T00:00:00+01:00')).toBe(Date.UTC(2024, 1, 29, 23));
  });
});

describe('globMatch', () => {
  it("globMatch(path, pattern) matches '*' within a segment, '**' across, '?' and classes, case-insensitively", () => {
    expect(globMatch('/data/n1/bias_0c/b001.fits', 'bias*/*.fits')).toBe(true);
    expect(globMatch('/data/n1/bias_0c/sub/b001.fits', 'bias*/*.fits')).toBe(false);
    expect(globMatch('/data/n1/bias_0c/sub/b001.fits', 'bias*/**/*.fits')).toBe(true);
    expect(globMatch('C:\\night\\Flats\\F01.FIT', 'flats/f??.fit')).toBe(true);
    expect(globMatch('x/dark_300s_001.fits', 'dark_[0-9]*.fits')).toBe(true);
    expect(globMatch('x/dark_a.fits', 'dark_[0-9]*.fits')).toBe(false);
    expect(globMatch('x/a.b.fits', 'a?b.fits')).toBe(true);
    expect(globMatch('x/axb.fits', 'a.b.fits')).toBe(false);
  });
});

describe('sortCameraFrames', () => {
  it('sortCameraFrames(frames) groups by settings, pairs consecutive frames in DATE-OBS order and reports the rest', () => {
    const frames = [
      frame('f3.fits', { IMAGETYP: 'Flat Field', EXPTIME: 1, 'DATE-OBS': '2024-01-01T00:00:03' }),
      frame('f1.fits', { IMAGETYP: 'Flat Field', EXPTIME: 1, 'DATE-OBS': '2024-01-01T00:00:01' }),
      frame('f2.fits', { IMAGETYP: 'Flat Field', EXPTIME: 1, 'DATE-OBS': '2024-01-01T00:00:02' }),
      frame('g1.fits', { IMAGETYP: 'Flat Field', EXPTIME: 2 }),
      frame('g2.fits', { IMAGETYP: 'Flat Field', EXPTIME: 2 }),
      frame('b1.fits', { IMAGETYP: 'Bias Frame', 'CCD-TEMP': -10.2 }),
      frame('b2.fits', { IMAGETYP: 'Bias Frame', 'CCD-TEMP': -9.8 }),
      frame('b3.fits', { IMAGETYP: 'Bias Frame', 'CCD-TEMP': -5 }),
      frame('l1.fits', { IMAGETYP: 'Light Frame' }),
      frame('x.fits', {}),
      frame('d.fits', { IMAGETYP: 'Dark Frame' }),
    ];
    const s = sortCameraFrames(frames);
    const names = (i: number) => frames[i]!.file;
    expect(s.pairs.map((p) => [p.kind, names(p.a), names(p.b)])).toEqual([
      ['flat', 'f1.fits', 'f2.fits'], ['flat', 'g1.fits', 'g2.fits'], ['bias', 'b1.fits', 'b2.fits'],
    ]);
    expect(s.leftOut).toEqual(expect.arrayContaining([
      { file: 'l1.fits', kind: 'light', reason: 'light-frame' },
      { file: 'x.fits', kind: 'unknown', reason: 'unknown-kind' },
      { file: 'd.fits', kind: 'dark', reason: 'no-exposure' },
      { file: 'f3.fits', kind: 'flat', reason: 'unpaired' },
      { file: 'b3.fits', kind: 'bias', reason: 'unpaired' },
    ]));
    expect(s.groups.find((g) => g.kind === 'flat' && g.exposureSeconds === 1)!.orderedBy).toBe('time');
    expect(s.groups.find((g) => g.kind === 'flat' && g.exposureSeconds === 2)!.orderedBy).toBe('input-order');
  });
  it('sortCameraFrames(frames, {kindOverrides}) takes the kind from the first matching glob', () => {
    const s = sortCameraFrames([frame('night/bias/a.fits', { IMAGETYP: 'Light Frame' }), frame('night/other/c.fits', {})],
      { kindOverrides: { bias: ['bias/*.fits'], flat: ['**/c.fits'] } });
    expect(s.frames.map((f) => [f.kind, f.kindSource])).toEqual([['bias', 'override'], ['flat', 'override']]);
  });
  it('sortCameraFrames(frames) never pairs frames of different size, binning or gain setting', () => {
    const s = sortCameraFrames([
      frame('a.fits', { IMAGETYP: 'bias', GAIN: 100 }), frame('b.fits', { IMAGETYP: 'bias', GAIN: 200 }),
      frame('c.fits', { IMAGETYP: 'bias', XBINNING: 2, YBINNING: 2 }), frame('d.fits', { IMAGETYP: 'bias' }, 8, 4),
    ]);
    expect(s.pairs).toHaveLength(0);
    expect(s.groups).toHaveLength(4);
  });
});

describe('detectQuantizationStep', () => {
  const v = (data: Uint16Array | Float32Array) => ({ data, width: data.length, height: 1, strideX: 1, strideY: data.length, offset: 0 });
  it('detectQuantizationStep(view) finds 16 for 12-bit data shifted to 16 bits, with an offset (REFERENCE B.10)', () => {
    const d = new Uint16Array(1000);
    for (let i = 0; i < d.length; i++) d[i] = 16 * ((i * 7919) % 300) + 3;
    expect(detectQuantizationStep(v(d))).toMatchObject({ stepAdu: 16, integerValued: true, minimumCode: 3 });
  });
  it('detectQuantizationStep(view) gives null for non-integer or constant data', () => {
    expect(detectQuantizationStep(v(new Float32Array([0.1, 0.5, 0.25]))).stepAdu).toBeNull();
    expect(detectQuantizationStep(v(new Uint16Array([5, 5, 5]))).stepAdu).toBeNull();
    expect(combineQuantizationSteps([null, 16, 4])).toBe(4);
    expect(combineQuantizationSteps([null])).toBeNull();
  });
});
