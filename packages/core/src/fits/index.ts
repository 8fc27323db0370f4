// Public API of the fits area; re-exports only.
export type * from './types.js';
