import { CoreError } from '@subgauge/core';
import { describe, expect, it } from 'vitest';
import { parseResultDocument } from '../../src/schemas/index.js';
import { toResultDocuments } from '../../src/commands/reportFiles.js';

function failure(value: unknown, file = 'r.json'): CoreError {
  try {
    parseResultDocument(value, file);
  } catch (e) {
    if (e instanceof CoreError) return e;
    throw e;
  }
  throw new Error('expected parseResultDocument to throw');
}

const camera = {
  schema: 'subgauge.camera/1',
  gainElectronsPerAdu: 1.1,
  readNoiseElectrons: 2.5,
  fullWellElectrons: 30000,
  curve: [
    { signalAdu: 100, varianceAdu2: 95, inFit: true },
    { signalAdu: 1000, varianceAdu2: 910, inFit: true },
  ],
};

describe('parseResultDocument(value, file)', () => {
  it('parseResultDocument(camera) accepts a minimal camera document and keeps unknown fields', () => {
    const doc = parseResultDocument({ ...camera, futureField: { a: 1 } }, 'c.json');
    expect(doc.schema).toBe('subgauge.camera/1');
    expect((doc as Record<string, unknown>).futureField).toEqual({ a: 1 });
  });

  it('parseResultDocument(value) names the failing field of a wrong type: curve[1].signalAdu', () => {
    const bad = { ...camera, curve: [camera.curve[0], { ...camera.curve[1], signalAdu: '1000' }] };
    const e = failure(bad, 'cam.json');
    expect(e.code).toBe('INPUT_BAD_RESULT');
    expect(e.where).toEqual({ file: 'cam.json', keyword: 'curve[1].signalAdu' });
    expect(e.message).toContain('curve[1].signalAdu');
  });

  it('parseResultDocument(value) names a missing field of an old file: frames[0].verdict', () => {
    const audit = {
      schema: 'subgauge.audit/1',
      frames: [{ file: 'a.fits', reasons: [], metrics: null }],
      counts: { frames: 1, keep: 1, review: 0, reject: 0 },
    };
    const e = failure(audit);
    expect(e.where.keyword).toBe('frames[0].verdict');
  });

  it('parseResultDocument(value) rejects an unknown verdict and sky status by field', () => {
    const audit = {
      schema: 'subgauge.audit/1',
      frames: [{ file: 'a.fits', verdict: 'maybe', reasons: [], metrics: null }],
      counts: { frames: 1, keep: 1, review: 0, reject: 0 },
    };
    expect(failure(audit).where.keyword).toBe('frames[0].verdict');
    const sky = {
      schema: 'subgauge.sky/1',
      subs: [{ file: 'a', filter: 'L', exposureSeconds: 60, readNoisePenaltyPercent: 3, status: 'fine' }],
      filters: [],
      maxPenaltyPercent: 5,
    };
    expect(failure(sky).where.keyword).toBe('subs[0].status');
  });

  it('parseResultDocument(value) refuses a missing, foreign or newer schema tag by the field schema', () => {
    for (const v of [{ gainElectronsPerAdu: 1 }, { schema: 'subgauge.inspect/1', files: [] }, { ...camera, schema: 'subgauge.camera/2' }, [1, 2], 'text']) {
      const e = failure(v);
      expect(e.code).toBe('INPUT_BAD_RESULT');
      expect(e.where.keyword).toBe('schema');
    }
    expect(failure({ ...camera, schema: 'subgauge.camera/2' }).message).toContain('subgauge.camera/1');
  });

  it('toResultDocuments(docs) turns non-finite numbers into null (as --json does) and validates', () => {
    const sky = {
      schema: 'subgauge.sky/1',
      subs: [{ file: 'a', filter: 'L', exposureSeconds: 60, readNoisePenaltyPercent: 3, status: 'sky-limited', minimumExposureSeconds: Infinity }],
      filters: [],
      maxPenaltyPercent: 5,
    };
    const [doc] = toResultDocuments([sky]);
    expect(doc!.schema === 'subgauge.sky/1' && doc!.subs[0]!.minimumExposureSeconds).toBeNull();
    expect(() => toResultDocuments([{ ...sky, maxPenaltyPercent: NaN }], ['sky.json'])).toThrow(/maxPenaltyPercent/);
  });
});
