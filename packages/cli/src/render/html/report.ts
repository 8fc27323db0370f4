/** The self-contained HTML report: page shell plus one section per result document. */
import type { AuditDocument, CameraDocument, ResultDocument, SkyDocument } from '../../schemas/results.js';
import { auditSection, type ReportBackgroundMap, type ReportThumbnail } from './audit.js';
import { cameraSection } from './camera.js';
import { esc } from './escape.js';
import { num, plusMinus } from './format.js';
import { htmlPage } from './page.js';
import { skySection } from './sky.js';

export interface ReportOptions {
  /** Page title and heading (default "subgauge report"). */
  title?: string;
  /** When the report was made, shown as given (e.g. an ISO time); left out when absent. */
  generatedAt?: string;
  /** Thumbnails of audit frames (shown for review and reject verdicts). */
  thumbnails?: readonly ReportThumbnail[];
  /** The background mesh of one chosen frame. */
  backgroundMap?: ReportBackgroundMap;
  /** Where each document came from (same order as the documents), shown in the header. */
  sources?: readonly string[];
}

const KIND_OF = {
  'subgauge.camera/1': 'camera',
  'subgauge.sky/1': 'sky',
  'subgauge.audit/1': 'audit',
} as const;

function summaryOf(doc: ResultDocument): string {
  switch (doc.schema) {
    case 'subgauge.camera/1':
      return `gain ${plusMinus(doc.gainElectronsPerAdu, doc.gainUncertaintyElectronsPerAdu, 'e⁻/ADU')}, read noise ${num(doc.readNoiseElectrons, 3)} e⁻`;
    case 'subgauge.sky/1': {
      const files = new Set(doc.subs.map((s) => s.file)).size;
      const ok = new Set(doc.subs.filter((s) => s.status === 'sky-limited').map((s) => s.file)).size;
      return `${ok} of ${files} subs sky-limited`;
    }
    case 'subgauge.audit/1':
      return `${doc.counts.frames} frames: ${doc.counts.keep} keep, ${doc.counts.review} review, ${doc.counts.reject} reject`;
  }
}

const TITLES = { camera: 'Camera', sky: 'Sky-limited check', audit: 'Session audit' } as const;

/**
 * Render result documents as one self-contained HTML page: inline CSS and SVG, data: images, a strict
 * Content-Security-Policy and no scripts. Sections have stable ids `section-camera`, `section-sky`,
 * `section-audit` (a second document of a kind gets `-2`, and so on).
 * @param docs - validated documents (see `parseResultDocument`), shown in the order given
 * @returns the HTML text
 * @example writeFile('report.html', renderReport([camera, sky, audit], { title: 'Night of 14 March' }))
 */
export function renderReport(docs: readonly ResultDocument[], opts: ReportOptions = {}): string {
  const title = opts.title ?? 'subgauge report';
  const seen: Record<string, number> = {};
  const toc: string[] = [];
  const sections: string[] = [];
  docs.forEach((doc, i) => {
    const kind = KIND_OF[doc.schema];
    seen[kind] = (seen[kind] ?? 0) + 1;
    const id = `section-${kind}${seen[kind] > 1 ? `-${seen[kind]}` : ''}`;
    const source = opts.sources?.[i];
    toc.push(`<li><a href="#${id}">${esc(TITLES[kind])}${seen[kind] > 1 ? ` ${seen[kind]}` : ''}</a> <span class="note">${esc(summaryOf(doc))}</span></li>`);
    let html: string;
    if (doc.schema === 'subgauge.camera/1') html = cameraSection(doc as CameraDocument, id);
    else if (doc.schema === 'subgauge.sky/1') html = skySection(doc as SkyDocument, id);
    else html = auditSection(doc as AuditDocument, { ...(opts.thumbnails ? { thumbnails: opts.thumbnails } : {}), ...(opts.backgroundMap ? { backgroundMap: opts.backgroundMap } : {}) }, id);
    if (source) html = html.replace('</h2>', `</h2><p class="meta">from ${esc(source)}</p>`);
    sections.push(html);
  });
  const meta = [opts.generatedAt ? `generated ${opts.generatedAt}` : '', `${docs.length} result document${docs.length === 1 ? '' : 's'}`].filter(Boolean).join(' · ');
  const headerHtml = `<header class="report"><h1>${esc(title)}</h1><p class="meta">${esc(meta)}</p>${
    toc.length ? `<nav class="toc" aria-label="sections"><ul>${toc.join('')}</ul></nav>` : ''
  }</header>${docs.length ? '' : '<p>No results to show.</p>'}`;
  const footerHtml =
    'Made by subgauge. Series colours from the Okabe-Ito colour-blind-safe palette, with a distinct marker shape per series; maps use viridis. ' +
    'Measured values describe the frames given: a camera’s behaviour changes with gain, offset, temperature and firmware.';
  return htmlPage({ title, headerHtml, bodyHtml: sections.join('\n'), footerHtml: esc(footerHtml) });
}
