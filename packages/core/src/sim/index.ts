// Public API of the sim area; re-exports only (owned by the sim work).
export {};
