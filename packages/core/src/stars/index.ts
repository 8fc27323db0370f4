// Public API of the stars area; re-exports only (owned by the stars work).
export {};
