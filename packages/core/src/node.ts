// @subgauge/core/node: everything in the pure entry plus file access (the only place core touches node:).
export * from './index.js';
export * from './node/index.js';
