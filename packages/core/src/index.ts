export * from './errors.js';
export * from './diagnostics.js';
export type * from './fits/types.js';
