// File access for Node (owned by the fits work).
export { readFitsFile, readFitsHeaders, readFitsRows } from './readFits.js';
export type { HeaderOnlyFile, ReadFileOptions, RowRange } from './readFits.js';
export { writeFileAtomic } from './writeFileAtomic.js';
