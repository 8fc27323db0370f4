// Public API of the frame area: what a header says about the observation.
export * from './observation.js';
