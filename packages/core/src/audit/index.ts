// Public API of the audit area; re-exports only (owned by the audit work).
export {};
