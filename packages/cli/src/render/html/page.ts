/**
 * The page shell of the HTML report: one self-contained document with inline CSS, no scripts, and a strict
 * Content-Security-Policy (CSP Level 3, W3C) that allows only that one style element (by its SHA-256 hash) and
 * data: images, so nothing can be loaded from the network and no injected markup could run.
 */
import { createHash } from 'node:crypto';
import { esc } from './escape.js';
import { OKABE_ITO } from './palette.js';

const colourRules = Object.entries(OKABE_ITO)
  .map(([name, hex]) => `.c-${name}{color:${hex}}`)
  .join('');

/** The report's style sheet: light and dark themes (prefers-color-scheme), narrow screens, print. */
export const REPORT_CSS = `
:root{--bg:#ffffff;--fg:#1b1d21;--muted:#5b616b;--line:#d8dbe0;--soft:#f3f4f6;--grid:#eceef1;--accent:#0072B2;
--keep:#007a5a;--review:#9a6700;--reject:#b34700;color-scheme:light dark}
@media (prefers-color-scheme:dark){:root{--bg:#15171a;--fg:#e6e8eb;--muted:#a3a9b3;--line:#383c43;--soft:#1f2226;
--grid:#272a2f;--accent:#56B4E9;--keep:#3fc59d;--review:#f0b43c;--reject:#ff8a4c}}
*{box-sizing:border-box}
html{-webkit-text-size-adjust:100%}
body{margin:0;background:var(--bg);color:var(--fg);font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,"Noto Sans",sans-serif}
main{max-width:1120px;margin:0 auto;padding:24px 20px 48px}
header.report{border-bottom:2px solid var(--fg);padding-bottom:12px;margin-bottom:8px}
h1{font-size:1.75rem;line-height:1.2;margin:0 0 4px}
h2{font-size:1.35rem;margin:40px 0 4px;padding-top:8px;border-top:1px solid var(--line)}
h3{font-size:1.05rem;margin:28px 0 8px}
p{margin:6px 0}
.meta,.note,figcaption,.sub{color:var(--muted)}
.meta{font-size:.9rem}
.note{font-size:.88rem}
nav.toc ul{list-style:none;margin:8px 0 0;padding:0;display:flex;flex-wrap:wrap;gap:6px 18px}
nav.toc a{color:var(--accent);text-decoration:none;font-weight:600}
nav.toc a:hover{text-decoration:underline}
.cards{display:grid;grid-template-columns:repeat(auto-fill,minmax(190px,1fr));gap:10px;margin:14px 0}
.card{background:var(--soft);border:1px solid var(--line);border-radius:8px;padding:10px 12px}
.card dt{font-size:.8rem;color:var(--muted);text-transform:uppercase;letter-spacing:.03em}
.card dd{margin:2px 0 0;font-size:1.2rem;font-weight:650;font-variant-numeric:tabular-nums}
.card .sub{font-size:.8rem;font-weight:400;display:block}
.card .unit{font-size:.85rem;font-weight:500;color:var(--muted)}
.figures{display:grid;grid-template-columns:repeat(auto-fit,minmax(460px,1fr));gap:18px 22px;margin:12px 0}
figure{margin:0;min-width:0}
.plot-wrap{overflow-x:auto}
svg.plot{display:block;width:100%;min-width:400px;height:auto}
figcaption{font-size:.86rem;margin-top:4px}
figcaption strong{color:var(--fg)}
svg.plot text{font-size:12px;fill:var(--muted)}
svg.plot .axis-label{font-size:12.5px;fill:var(--fg)}
svg.plot .legend text{fill:var(--fg)}
svg.plot .rule-label{fill:currentColor;font-size:11.5px;paint-order:stroke;stroke:var(--bg);stroke-width:3px}
svg.plot .grid{stroke:var(--grid);fill:none}
svg.plot .frame{fill:none;stroke:var(--line)}
svg.plot .tick{stroke:var(--muted)}
svg.plot .pt{fill:currentColor;stroke:var(--bg);stroke-width:.8}
svg.plot .pt.hollow{fill:var(--bg);stroke:currentColor;stroke-width:1.5}
svg.plot .pt.stroke{fill:none;stroke:currentColor;stroke-width:2.2}
svg.plot .err{stroke:currentColor;stroke-width:1.2;fill:none;opacity:.75}
svg.plot .line{fill:none;stroke:currentColor;stroke-width:2}
svg.plot .rule{fill:none;stroke:currentColor;stroke-width:1.5}
svg.plot .dash{stroke-dasharray:6 4}
svg.plot .band{fill:currentColor;opacity:.18;stroke:none}
svg.plot .outside{display:none}
${colourRules}
.c-ink{color:var(--fg)}.c-grey{color:var(--muted)}
@media (prefers-color-scheme:dark){.c-black{color:var(--fg)}.c-blue{color:#3d9be0}}
.table-wrap{overflow:auto;max-height:560px;border:1px solid var(--line);border-radius:6px;margin:10px 0}
table{border-collapse:collapse;width:100%;font-size:.86rem;font-variant-numeric:tabular-nums}
th,td{padding:5px 9px;text-align:left;border-bottom:1px solid var(--line);vertical-align:top}
caption{text-align:left;padding:7px 9px;font-weight:600;color:var(--fg);font-size:.9rem}
td.time{white-space:nowrap}
thead th{position:sticky;top:0;background:var(--soft);font-weight:600;white-space:nowrap}
td.n,th.n{text-align:right;white-space:nowrap}
td.file{word-break:break-all;min-width:11em}
td.reasons{min-width:15em}
tbody tr:nth-child(even){background:color-mix(in srgb,var(--soft) 55%,transparent)}
.verdict{font-weight:650;white-space:nowrap}
.verdict.keep{color:var(--keep)}.verdict.review{color:var(--review)}.verdict.reject{color:var(--reject)}
.status-sky-limited{color:var(--keep)}.status-read-noise-limited{color:var(--reject)}
.detail{display:block;font-size:.8rem;color:var(--muted)}
.chips{display:flex;flex-wrap:wrap;gap:6px;margin:8px 0;padding:0;list-style:none}
.chips li{border:1px solid var(--line);border-radius:999px;padding:1px 10px;font-size:.85rem}
.thumbs{display:grid;grid-template-columns:repeat(auto-fill,minmax(220px,1fr));gap:14px;margin:12px 0}
.thumbs svg{display:block;width:100%;height:auto;background:#000;border-radius:4px}
.thumbs .trail{stroke:#E69F00;fill:none;stroke-linecap:round}
.bgmap svg{display:block;width:100%;max-width:480px;height:auto}
.bgmap text{font-size:17px;fill:var(--muted)}
ul.plain{margin:6px 0;padding-left:1.2em}
details{margin:10px 0}
summary{cursor:pointer;font-weight:600}
footer{margin-top:48px;padding-top:10px;border-top:1px solid var(--line);font-size:.82rem;color:var(--muted)}
@media (max-width:600px){body{font-size:14px}main{padding:14px 12px 32px}h1{font-size:1.4rem}
.figures{grid-template-columns:1fr}.cards{grid-template-columns:repeat(2,minmax(0,1fr))}.card dd{font-size:1.05rem}
svg.plot{min-width:0}svg.plot text,svg.plot .axis-label{font-size:15px}svg.plot .legend text,svg.plot .rule-label{font-size:13px}}
@media print{:root{--bg:#fff;--fg:#000;--muted:#333;--line:#bbb;--soft:#f4f4f4;--grid:#e6e6e6;color-scheme:light}
body{font-size:10.5pt}main{max-width:none;padding:0}nav.toc{display:none}
.c-black{color:#000}.c-blue{color:#0072B2}
h2{break-before:page;border-top:none}section:first-of-type h2{break-before:auto}
figure,.card,tr,.thumbs figure{break-inside:avoid}
.figures{grid-template-columns:1fr 1fr}.table-wrap{max-height:none;overflow:visible;border:none}
svg.plot{min-width:0}thead th{position:static}a{color:inherit;text-decoration:none}}
`.trim();

/** `'sha256-…'` CSP source of a style element's exact text. */
export function cspHash(text: string): string {
  return `'sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}'`;
}

/** The report's policy: nothing by default, data: images, and the one inline style sheet by hash. */
export function contentSecurityPolicy(css: string): string {
  return `default-src 'none'; img-src data:; style-src ${cspHash(css)}; base-uri 'none'; form-action 'none'`;
}

/** Wrap rendered sections into a complete HTML document. `title` and `headerHtml` parts are escaped by the caller. */
export function htmlPage(parts: { title: string; headerHtml: string; bodyHtml: string; footerHtml: string }): string {
  return [
    '<!DOCTYPE html>',
    '<html lang="en">',
    '<head>',
    '<meta charset="utf-8">',
    `<meta http-equiv="Content-Security-Policy" content="${esc(contentSecurityPolicy(REPORT_CSS))}">`,
    '<meta name="viewport" content="width=device-width, initial-scale=1">',
    '<meta name="color-scheme" content="light dark">',
    '<meta name="referrer" content="no-referrer">',
    '<meta name="generator" content="subgauge">',
    `<title>${esc(parts.title)}</title>`,
    `<style>${REPORT_CSS}</style>`,
    '</head>',
    '<body>',
    '<main>',
    parts.headerHtml,
    parts.bodyHtml,
    `<footer>${parts.footerHtml}</footer>`,
    '</main>',
    '</body>',
    '</html>',
    '',
  ].join('\n');
}
