// File access for Node (owned by the fits work).
export {};
