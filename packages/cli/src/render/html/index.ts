// The HTML report: renderer, thumbnails and the plot module (re-exports only).
export { renderReport, type ReportOptions } from './report.js';
export type { ReportThumbnail, ReportBackgroundMap, AuditSectionOptions } from './audit.js';
export { thumbnailPng, blockMean, thumbnailFactor, pngSize, type ThumbnailOptions } from './thumbnail.js';
export { renderPlot, markerPath, type PlotSpec, type Series, type AxisSpec, type PlotPoint } from './plot.js';
export { esc } from './escape.js';
export { REPORT_CSS, contentSecurityPolicy } from './page.js';
