// Public API of the image area; re-exports only (owned by the image work).
export type { FrameView } from './view.js';
export { viewOf, frameView, regionView, steppedView, viewWidth, viewHeight, contiguousCopy } from './view.js';
export type { CfaPatternName, CfaCellOffset, CfaPattern, CfaHeaderSource, CfaPlanes } from './cfa.js';
export { cfaPattern, cfaPlanes, cfaPatternAt } from './cfa.js';
