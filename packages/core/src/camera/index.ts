// Public API of the camera area; re-exports only (owned by the camera work).
export {};
