// Public API of the image area; re-exports only (owned by the image work).
export {};
