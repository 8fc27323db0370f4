/**
 * The HTML report in a real browser: Debian's chromium (/usr/bin/chromium) driven by playwright-core, with a fresh
 * profile and every request routed (only the report's own file: URL and data: images may load). Chromium is an
 * outside reference: missing under CI=true fails the test, otherwise the test is skipped. No browser is downloaded.
 */
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toResultDocuments } from '../../packages/cli/src/commands/reportFiles.js';
import { renderReport } from '../../packages/cli/src/render/html/report.js';
import { decodePng } from '../../packages/cli/test/render/pngPixels.js';
import { sampleSession } from '../../packages/cli/test/render/samples.js';
import { requireOutside } from '../helpers/outside.js';

const CHROMIUM = '/usr/bin/chromium';
const ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];
const HOSTILE = '<script>alert(1)</script>"><img src=x onerror=alert(1)>';

const available = existsSync(CHROMIUM);
const dir = mkdtempSync(path.join(os.tmpdir(), 'subgauge-browser-'));
let context: BrowserContext | undefined;
let page: Page | undefined;
const consoleErrors: string[] = [];
const blocked: string[] = [];
let reportUrl = '';

beforeAll(async () => {
  if (!available) return;
  // Realistic documents: a mono and a colour camera, the sky check and the audit of a seeded simulated night.
  const mono = sampleSession();
  const colour = sampleSession({ preset: 'wren-c12', seed: 4 });
  const audit = structuredClone(mono.audit);
  audit.frames[0]!.metrics!.object = `Field 12 ${HOSTILE}`;
  const docs = toResultDocuments([mono.camera, mono.sky, audit, colour.camera]);
  const html = renderReport(docs, {
    title: 'Invented Ridge Observatory, night of 4 October',
    generatedAt: '2031-10-05 06:00 UTC',
    thumbnails: mono.thumbnails,
    backgroundMap: mono.backgroundMap,
  });
  const file = path.join(dir, 'report.html');
  writeFileSync(file, html);
  reportUrl = pathToFileURL(file).href;
  context = await chromium.launchPersistentContext(path.join(dir, 'profile'), {
    executablePath: CHROMIUM,
    args: ARGS,
    viewport: { width: 1200, height: 900 },
    offline: true,
  });
  page = context.pages()[0] ?? (await context.newPage());
  page.on('console', (m) => {
    if (m.type() === 'error') consoleErrors.push(m.text());
  });
  page.on('pageerror', (e) => consoleErrors.push(e.message));
  await context.route('**/*', (route) => {
    const url = route.request().url();
    if (url === reportUrl || url.startsWith('data:')) return route.continue();
    blocked.push(url);
    return route.abort();
  });
  context.on('request', (r) => {
    const url = r.url();
    if (url !== reportUrl && !url.startsWith('data:') && !blocked.includes(url)) blocked.push(url);
  });
  await page.goto(reportUrl, { waitUntil: 'load' });
}, 120_000);

afterAll(async () => {
  await context?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('the HTML report in chromium', () => {
  it('renderReport(docs) opens with every section and figure, no console error and no network request', async (ctx) => {
    if (!requireOutside(`chromium at ${CHROMIUM}`, available, ctx)) return;
    const p = page!;
    for (const id of ['section-camera', 'section-sky', 'section-audit', 'section-camera-2']) {
      expect(await p.locator(`section#${id} h2`).count(), id).toBe(1);
    }
    const plots = await p.locator('figure[data-plot]').evaluateAll((els) =>
      els.map((e) => ({
        plot: e.getAttribute('data-plot'),
        caption: e.querySelector('figcaption')?.textContent?.trim() ?? '',
        label: e.querySelector('svg')?.getAttribute('aria-label') ?? '',
        role: e.querySelector('svg')?.getAttribute('role'),
        width: e.querySelector('svg')?.getBoundingClientRect().width ?? 0,
      })),
    );
    const ids = new Set(plots.map((f) => f.plot));
    for (const id of [
      'camera-ptc',
      'camera-gain',
      'camera-linearity',
      'camera-dark',
      'camera-channels',
      'sky-penalty',
      'sky-rate',
      'sky-snr',
      'audit-background',
      'audit-noise',
      'audit-fwhm',
      'audit-stars',
      'audit-weight',
      'audit-thumbnail',
      'audit-background-map',
    ]) {
      expect(ids.has(id), id).toBe(true);
    }
    for (const f of plots) {
      expect(f.caption.length, f.plot ?? '').toBeGreaterThan(5);
      expect(f.label.length, f.plot ?? '').toBeGreaterThan(5);
      expect(f.role).toBe('img');
      expect(f.width, f.plot ?? '').toBeGreaterThan(100);
    }
    // The thumbnails' data: images decoded.
    const images = await p.locator('figure[data-plot="audit-thumbnail"] image').count();
    expect(images).toBeGreaterThan(0);
    expect(consoleErrors).toEqual([]);
    expect(blocked).toEqual([]);
  });

  it('renderReport(docs) shows an OBJECT with markup as text and creates no script or img element', async (ctx) => {
    if (!requireOutside(`chromium at ${CHROMIUM}`, available, ctx)) return;
    const p = page!;
    expect(await p.locator('script').count()).toBe(0);
    expect(await p.locator('img').count()).toBe(0);
    const cell = await p.locator('table[data-table="audit-frames"] tbody tr').first().locator('td').first().textContent();
    expect(cell).toContain(`Field 12 ${HOSTILE}`);
  });

  it('renderReport(docs) screenshot is not blank, fits a phone width and switches theme and print styles', async (ctx) => {
    if (!requireOutside(`chromium at ${CHROMIUM}`, available, ctx)) return;
    const p = page!;
    const shot = decodePng(await p.screenshot({ fullPage: false }));
    let sum = 0;
    let sum2 = 0;
    let dark = 0;
    const n = shot.width * shot.height;
    for (let i = 0; i < n; i++) {
      const y = 0.2126 * shot.data[4 * i]! + 0.7152 * shot.data[4 * i + 1]! + 0.0722 * shot.data[4 * i + 2]!;
      sum += y;
      sum2 += y * y;
      if (y < 128) dark++;
    }
    const variance = sum2 / n - (sum / n) ** 2;
    expect(variance).toBeGreaterThan(200);
    expect(dark / n).toBeGreaterThan(0.01);

    await p.setViewportSize({ width: 390, height: 844 });
    const overflow = await p.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
    expect(overflow).toBeLessThanOrEqual(1);

    const background = () => p.evaluate(() => getComputedStyle(document.body).backgroundColor);
    await p.emulateMedia({ colorScheme: 'dark' });
    expect(await background()).toBe('rgb(21, 23, 26)');
    await p.emulateMedia({ colorScheme: 'light' });
    expect(await background()).toBe('rgb(255, 255, 255)');
    await p.emulateMedia({ media: 'print' });
    expect(await p.locator('nav.toc').evaluate((e) => getComputedStyle(e).display)).toBe('none');
    await p.emulateMedia({ media: 'screen' });
    await p.setViewportSize({ width: 1200, height: 900 });
    expect(consoleErrors).toEqual([]);
  });
});
