import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { csvCell } from '../../src/render/csv.js';
import { esc } from '../../src/render/html/escape.js';
import { renderReport } from '../../src/render/html/report.js';
import { parseResultDocument } from '../../src/schemas/index.js';

const SCRIPT = '<script>alert(1)</script>';
const ATTR_BREAK = '"><img src=x onerror=alert(1)>';
const FORMULA = '=HYPERLINK("http://x")';
const PAYLOADS = [SCRIPT, ATTR_BREAK, FORMULA];

/** An audit document whose header-derived strings (file, OBJECT, FILTER, reasons) carry markup and formulas. */
function hostileAudit() {
  const frames = PAYLOADS.map((p, i) => ({
    file: `light_${i}${p}.fits`,
    verdict: i === 0 ? 'reject' : i === 1 ? 'review' : 'keep',
    reasons: i === 2 ? [] : [`trail${p}`],
    details: i === 2 ? [] : [{ reason: 'trail', metric: `trailCount${p}`, test: 'above', value: p, reference: 0, limit: 0 }],
    metrics: {
      file: `light_${i}${p}.fits`,
      object: `M 31 ${p}`,
      filter: `Ha${p}`,
      startTimeMs: Date.UTC(2031, 9, 4, 20, i * 3),
      exposureSeconds: 120,
      width: 64,
      height: 48,
      backgroundAdu: 2400 + i,
      noiseAdu: 30,
      starCount: 50,
      fwhmPixels: 3,
      trails: i === 0 ? [{ x0: 0, y0: 0, x1: 63, y1: 47 }] : [],
    },
    weight: 1,
    notes: [`note${p}`],
  }));
  return parseResultDocument(
    {
      schema: 'subgauge.audit/1',
      frames,
      counts: { frames: 3, keep: 1, review: 1, reject: 1, byReason: { [`trail${SCRIPT}`]: 2 } },
      forecast: [{ filter: `Ha${ATTR_BREAK}`, all: { frameCount: 3 }, kept: { frameCount: 1 } }],
      groups: [{ index: 1, filter: `Ha${SCRIPT}`, lightCount: 3, bias: { status: `missing${SCRIPT}` } }],
      notes: [`session${ATTR_BREAK}`],
    },
    'hostile-audit.json',
  );
}

function hostileSky() {
  return parseResultDocument({
    schema: 'subgauge.sky/1',
    camera: { gainElectronsPerAdu: 1, readNoiseElectrons: 3, offsetAdu: 100, source: `options${SCRIPT}` },
    subs: PAYLOADS.map((p, i) => ({
      file: `sub${p}.fits`,
      filter: `O III ${p}`,
      channel: i === 1 ? `G${p}` : undefined,
      exposureSeconds: 60,
      skyElectrons: 100,
      skyRateElectronsPerSecond: 1.5,
      readNoisePenaltyPercent: 4,
      status: 'sky-limited',
      minimumExposureSeconds: 50,
    })),
    filters: [{ filter: `O III ${ATTR_BREAK}`, subs: 3, skyLimitedSubs: 3, limitingChannel: SCRIPT }],
    maxPenaltyPercent: 5,
  });
}

function hostileCamera() {
  return parseResultDocument({
    schema: 'subgauge.camera/1',
    gainElectronsPerAdu: 1.2,
    readNoiseElectrons: 3,
    fullWellElectrons: 20000,
    curve: [
      { files: [`flat${SCRIPT}.fits`, `flat${ATTR_BREAK}.fits`], signalAdu: 1000, varianceAdu2: 900, inFit: true },
      { files: [FORMULA, 'b.fits'], signalAdu: 2000, varianceAdu2: 1700, inFit: false, excludedBecause: `odd${SCRIPT}` },
    ],
    settings: { gain: `high${SCRIPT}`, offset: ATTR_BREAK },
    cfa: { pattern: `RGGB${SCRIPT}` },
    frames: { used: [], leftOut: [{ file: `x${ATTR_BREAK}.fits`, reason: FORMULA }] },
    diagnostics: [{ code: `FITS_X${SCRIPT}`, message: ATTR_BREAK }],
  });
}

/** Every start tag of the markup (escaped text never forms one, since `<` in text is `&lt;`). */
function startTags(html: string): string[] {
  return [...html.matchAll(/<[a-zA-Z][^>]*>/g)].map((m) => m[0]);
}

/** A start tag split into its element name, attribute names and whatever is left (must be nothing). */
function tagParts(tag: string): { element: string; names: string[]; rest: string } {
  const element = /^<([a-zA-Z][\w-]*)/.exec(tag)![1]!;
  const names: string[] = [];
  let rest = tag.slice(element.length + 1, -1).replace(/\/$/, '');
  rest = rest.replace(/\s([a-zA-Z_:][-a-zA-Z0-9_:.]*)(="[^"]*")?/g, (_m, name: string) => {
    names.push(name.toLowerCase());
    return '';
  });
  return { element: element.toLowerCase(), names, rest: rest.trim() };
}

describe('HTML escaping of header-derived strings', () => {
  it('esc(value) escapes & < > " \' and replaces control characters', () => {
    expect(esc(`a&b<c>d"e'f`)).toBe('a&amp;b&lt;c&gt;d&quot;e&#39;f');
    expect(esc('x\u0000y\u001bz')).toBe('x\ufffdy\ufffdz');
    expect(esc(undefined)).toBe('');
    expect(esc(12.5)).toBe('12.5');
  });

  const html = renderReport([hostileCamera(), hostileSky(), hostileAudit()], {
    title: `Night ${SCRIPT}`,
    generatedAt: ATTR_BREAK,
    sources: [`cam${SCRIPT}.json`, 'sky.json', `audit${ATTR_BREAK}.json`],
  });

  it('renderReport(docs) writes no script element and no img element for file, OBJECT and FILTER payloads', () => {
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/<img/i);
    for (const tag of startTags(html)) {
      const { element, names, rest } = tagParts(tag);
      expect(rest, tag).toBe('');
      expect(['script', 'img', 'iframe', 'object', 'embed', 'link', 'base']).not.toContain(element);
      for (const n of names) expect(n, tag).not.toMatch(/^on/);
    }
  });

  it('renderReport(docs) shows the payloads as escaped text', () => {
    expect(html).toContain('light_0&lt;script&gt;alert(1)&lt;/script&gt;.fits');
    expect(html).toContain('M 31 &quot;&gt;&lt;img src=x onerror=alert(1)&gt;');
    expect(html).toContain('Ha=HYPERLINK(&quot;http://x&quot;)');
    expect(html).toContain('<title>Night &lt;script&gt;alert(1)&lt;/script&gt;</title>');
    // Attribute values keep the payload inside their quotes (data-file on plot points).
    expect(html).toContain('data-file="light_1&quot;&gt;&lt;img src=x onerror=alert(1)&gt;.fits"');
  });

  it('renderReport(docs) loads nothing: no src attributes, hrefs only to #ids and data: images', () => {
    for (const tag of startTags(html)) {
      expect(tagParts(tag).names).not.toContain('src');
      for (const m of tag.matchAll(/\shref="([^"]*)"/g)) expect(m[1]).toMatch(/^(#|data:image\/png;base64,)/);
    }
    expect(html).not.toMatch(/url\((?!#)/);
    expect(html).not.toMatch(/@import/);
  });

  it('renderReport(docs) carries a strict CSP whose style hash matches the one style element', () => {
    const meta = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(html);
    expect(meta).not.toBeNull();
    const policy = meta![1]!.replace(/&#39;/g, "'");
    expect(policy).toMatch(/^default-src 'none'; img-src data:; style-src 'sha256-[A-Za-z0-9+/=]+'/);
    const styles = [...html.matchAll(/<style>([\s\S]*?)<\/style>/g)];
    expect(styles).toHaveLength(1);
    const hash = createHash('sha256').update(styles[0]![1]!, 'utf8').digest('base64');
    expect(policy).toContain(`'sha256-${hash}'`);
    expect(startTags(html).some((t) => /\sstyle="/.test(t))).toBe(false);
  });

  it('csvCell(value) neutralises the same header strings for spreadsheets', () => {
    expect(csvCell(FORMULA)).toBe(`"'=HYPERLINK(""http://x"")"`);
    expect(csvCell('+cmd')).toBe("'+cmd");
    expect(csvCell('@SUM(A1)')).toBe("'@SUM(A1)");
    expect(csvCell(ATTR_BREAK)).toBe(`"""><img src=x onerror=alert(1)>"`);
    expect(csvCell(-12.5)).toBe('-12.5');
  });
});
