// Public API of the sky area: read-noise penalty, sub-length advice, per-sub sky checks.
export * from './penalty.js';
export * from './subs.js';
export * from './background.js';
