import { describe, expect, it } from 'vitest';
import { toResultDocuments } from '../../src/commands/reportFiles.js';
import { renderReport } from '../../src/render/html/report.js';
import { sampleSession } from './samples.js';
import { attributesOf, linePoints, plotSvg, seriesOf } from './svgData.js';

// One simulated session (Kestrel preset, 128 x 96 px) measured by the core functions; see samples.ts.
const sample = sampleSession();
const [camera, sky, audit] = toResultDocuments([sample.camera, sample.sky, sample.audit]);
const html = renderReport([camera!, sky!, audit!], { thumbnails: sample.thumbnails, backgroundMap: sample.backgroundMap });
const close = (a: number, b: number, rel = 1e-12) => expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.max(1, Math.abs(b)));

describe('plot data in the report equal the results they show', () => {
  it('renderReport([camera]) camera-ptc points are the curve points (signal, √variance), split by use', () => {
    const series = seriesOf(plotSvg(html, 'camera-ptc'));
    const points = series.filter((s) => s.attrs['data-kind'] === 'points').flatMap((s) => s.points);
    expect(points).toHaveLength(sample.camera.curve.length);
    const inFit = series.find((s) => s.attrs['data-role'] === 'in-fit')!.points;
    const expected = sample.camera.curve.filter((p) => p.inFit);
    expect(inFit).toHaveLength(expected.length);
    expected.forEach((p, i) => {
      expect(Number(inFit[i]!['data-x'])).toBe(p.signalAdu);
      expect(Number(inFit[i]!['data-y'])).toBe(Math.sqrt(p.varianceAdu2));
      expect(Number(inFit[i]!['data-variance'])).toBe(p.varianceAdu2);
    });
  });

  it('renderReport([camera]) camera-ptc fit line carries the fit and its end points lie on σ = √(a + K·S)', () => {
    const fit = seriesOf(plotSvg(html, 'camera-ptc')).find((s) => s.attrs['data-role'] === 'fit')!;
    const f = sample.camera.fit!;
    expect(Number(fit.attrs['data-slope'])).toBe(f.slopeAduPerElectron);
    expect(Number(fit.attrs['data-intercept'])).toBe(f.interceptAdu2);
    expect(Number(fit.attrs['data-gain'])).toBe(f.gainElectronsPerAdu);
    for (const [x, y] of [
      [fit.attrs['data-x0'], fit.attrs['data-y0']],
      [fit.attrs['data-x1'], fit.attrs['data-y1']],
    ]) {
      close(Number(y), Math.sqrt(f.interceptAdu2 + f.slopeAduPerElectron * Number(x)));
    }
    const signals = sample.camera.curve.map((p) => p.signalAdu);
    close(Number(fit.attrs['data-x0']), Math.min(...signals));
    close(Number(fit.attrs['data-x1']), Math.max(...signals));
  });

  it('renderReport([camera]) camera-ptc read-noise floor and full-well lines sit at the measured values', () => {
    const series = seriesOf(plotSvg(html, 'camera-ptc'));
    expect(Number(series.find((s) => s.attrs['data-role'] === 'read-noise')!.attrs['data-value'])).toBe(sample.camera.bias.readNoiseAdu);
    const fw = series.find((s) => s.attrs['data-role'] === 'full-well')!;
    expect(Number(fw.attrs['data-value'])).toBe(sample.camera.fullWell.saturationSignalAdu);
    expect(Number(fw.attrs['data-electrons'])).toBe(sample.camera.fullWell.fullWellElectrons);
  });

  it('renderReport([camera]) camera-gain shows each level’s gain with its error bar and the fit band', () => {
    const series = seriesOf(plotSvg(html, 'camera-gain'));
    const pts = series.filter((s) => s.attrs['data-kind'] === 'points').flatMap((s) => s.points);
    const byX = new Map(pts.map((p) => [Number(p['data-x']), p]));
    for (const c of sample.camera.curve) {
      const p = byX.get(c.signalAdu)!;
      expect(Number(p['data-y'])).toBe(c.gainElectronsPerAdu);
      expect(Number(p['data-uncertainty'])).toBe(c.gainUncertaintyElectronsPerAdu);
    }
    const errs = series.flatMap((s) => s.errors);
    expect(errs).toHaveLength(sample.camera.curve.length);
    const band = series.find((s) => s.attrs['data-role'] === 'gain-band')!;
    const f = sample.camera.fit!;
    for (const [, y0, y1] of linePoints(band.attrs['data-points'])) {
      expect(y0).toBe(f.gainElectronsPerAdu - f.gainUncertaintyElectronsPerAdu);
      expect(y1).toBe(f.gainElectronsPerAdu + f.gainUncertaintyElectronsPerAdu);
    }
  });

  it('renderReport([camera]) camera-linearity and camera-dark points equal the linearity and dark levels', () => {
    const lin = seriesOf(plotSvg(html, 'camera-linearity')).find((s) => s.attrs['data-kind'] === 'line')!;
    const expected = [...sample.camera.linearity!.points].sort((a, b) => a.signalAdu - b.signalAdu).map((p) => [p.signalAdu, p.deviationPercent]);
    expect(linePoints(lin.attrs['data-points'])).toEqual(expected);
    const dark = seriesOf(plotSvg(html, 'camera-dark'));
    const temps = sample.camera.dark!.temperatures;
    expect(temps.length).toBeGreaterThan(0);
    temps.forEach((t, i) => {
      const s = dark.filter((d) => d.attrs['data-kind'] === 'points')[i]!;
      expect(s.points.map((p) => [Number(p['data-x']), Number(p['data-y'])])).toEqual(t.levels.map((l) => [l.exposureSeconds, l.levelAdu]));
      const line = dark.filter((d) => d.attrs['data-role'] === 'dark-fit')[i]!;
      close(Number(line.attrs['data-slope-adu-per-second']), t.darkCurrentElectronsPerSecond / sample.camera.gainElectronsPerAdu);
    });
  });

  it('renderReport([sky]) sky-penalty points are each sub’s penalty at its start time, with the limit line', () => {
    const series = seriesOf(plotSvg(html, 'sky-penalty'));
    const pts = series.flatMap((s) => s.points);
    expect(pts).toHaveLength(sample.sky.subs.length);
    const byFile = new Map(pts.map((p) => [p['data-file'], p]));
    for (const s of sample.sky.subs) {
      const p = byFile.get(s.file)!;
      expect(Number(p['data-y'])).toBe(s.readNoisePenaltyPercent);
      expect(Number(p['data-x'])).toBe(s.startTimeMs);
      expect(p['data-status']).toBe(s.status);
    }
    expect(Number(series.find((s) => s.attrs['data-role'] === 'limit')!.attrs['data-value'])).toBe(sample.sky.maxPenaltyPercent);
  });

  it('renderReport([sky]) sky-rate and sky-snr lines equal the sky rates and the sub-length table', () => {
    const rate = seriesOf(plotSvg(html, 'sky-rate')).flatMap((s) => s.points);
    const byFile = new Map(rate.map((p) => [p['data-file'], Number(p['data-y'])]));
    for (const s of sample.sky.subs) expect(byFile.get(s.file)).toBe(s.skyRateElectronsPerSecond);
    const snr = seriesOf(plotSvg(html, 'sky-snr'));
    for (const f of sample.sky.filters) {
      const line = snr.find((s) => s.attrs['data-kind'] === 'line' && s.attrs['data-filter'] === f.filter)!;
      expect(linePoints(line.attrs['data-points'])).toEqual(f.subLengthTable!.map((r) => [r.subSeconds, r.relativeSnr]));
      const rule = snr.find((s) => s.attrs['data-role'] === 'recommended' && s.attrs['data-filter'] === f.filter)!;
      expect(Number(rule.attrs['data-value'])).toBe(f.recommendedMinimumExposureSeconds);
    }
  });

  it('renderReport([audit]) audit plots put each frame in the series of its verdict with its values', () => {
    const checks: [string, (f: (typeof sample.audit.frames)[number]) => number | null | undefined][] = [
      ['audit-background', (f) => f.metrics?.backgroundAdu],
      ['audit-noise', (f) => f.metrics?.noiseAdu],
      ['audit-fwhm', (f) => f.metrics?.fwhmPixels],
      ['audit-stars', (f) => f.metrics?.starCount],
      ['audit-weight', (f) => f.weight],
    ];
    for (const [id, value] of checks) {
      const series = seriesOf(plotSvg(html, id));
      const pts = series.flatMap((s) => s.points.map((p) => ({ ...p, series: s.attrs['data-verdict'] })));
      const expected = sample.audit.frames.filter((f) => typeof value(f) === 'number');
      expect(pts, id).toHaveLength(expected.length);
      for (const f of expected) {
        const p = pts.find((q) => q['data-file'] === f.file)!;
        expect(Number(p['data-y']), `${id} ${f.file}`).toBe(value(f));
        expect(Number(p['data-x'])).toBe(f.metrics!.startTimeMs);
        expect(p.series).toBe(f.verdict);
        expect(p['data-verdict']).toBe(f.verdict);
      }
    }
  });

  it('renderReport([audit], { thumbnails }) shows review and reject frames with their trails drawn over them', () => {
    const flagged = sample.audit.frames.filter((f) => f.verdict !== 'keep');
    const figures = [...html.matchAll(/<figure data-plot="audit-thumbnail" data-file="([^"]*)">([\s\S]*?)<\/figure>/g)];
    expect(figures.map((m) => attributesOf(`<x data-file="${m[1]}">`)['data-file']).sort()).toEqual(flagged.map((f) => f.file).sort());
    const withTrail = flagged.filter((f) => (f.metrics?.trails.length ?? 0) > 0);
    expect(withTrail.length).toBeGreaterThan(0);
    for (const f of withTrail) {
      const fig = figures.find((m) => attributesOf(`<x data-file="${m[1]}">`)['data-file'] === f.file)![2]!;
      const lines = [...fig.matchAll(/<line [^>]*>/g)].map((m) => attributesOf(m[0]));
      expect(lines.map((l) => [l['data-x0'], l['data-y0'], l['data-x1'], l['data-y1']].map(Number))).toEqual(
        f.metrics!.trails.map((t) => [t.x0, t.y0, t.x1, t.y1]),
      );
      // First row at the bottom: y is flipped in the overlay.
      expect(Number(lines[0]!.y1)).toBe(f.metrics!.height - f.metrics!.trails[0]!.y0);
      expect(fig).toContain('data:image/png;base64,');
    }
  });

  it('renderReport([audit], { backgroundMap }) draws one cell per mesh box with its level', () => {
    const svg = plotSvg(html.replace('class="bgmap-svg"', 'class="plot"'), 'audit-background-map');
    const cells = [...svg.matchAll(/<rect [^>]*data-value="[^"]*"[^>]*>/g)].map((m) => attributesOf(m[0]));
    const map = sample.backgroundMap;
    expect(cells).toHaveLength(map.columns * map.rows);
    for (const c of cells) expect(Number(c['data-value'])).toBe(map.levelAdu[Number(c['data-row']) * map.columns + Number(c['data-column'])]);
  });
});
