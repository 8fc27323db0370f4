// Public API of the sky area; re-exports only (owned by the sky work).
export {};
