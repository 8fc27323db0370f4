// The public API of @subgauge/core: re-exports only. Each area owns its own index.ts.
export * from './errors.js';
export * from './diagnostics.js';
export * from './fits/index.js';
export * from './frame/index.js';
export * from './image/index.js';
export * from './stats/index.js';
export * from './sim/index.js';
export * from './camera/index.js';
export * from './sky/index.js';
export * from './stars/index.js';
export * from './audit/index.js';
export { meshLevelGrid } from './stats/mesh.js';
