// Public API of the stats area; re-exports only (owned by the stats work).
export {};
