// Test-only: the view shapes every view-taking statistic is checked on (STYLE.md "Testing habits"):
// full frame, a region at an edge, each Bayer plane, with odd width and height, each beside a contiguous copy.
import { cfaPattern, cfaPlanes, contiguousCopy, regionView, viewOf } from '../../src/image/index.js';
import type { FrameView } from '../../src/image/index.js';
import type { Pixels } from '../../src/fits/types.js';

export interface ViewCase {
  name: string;
  view: FrameView;
  /** The same pixels, copied into a fresh contiguous store, wrapped as a view. */
  copy: FrameView;
}

export function viewCases(pixels: Pixels, width: number, height: number): ViewCase[] {
  const frame = viewOf(pixels, width, height);
  const pattern = cfaPattern({ BAYERPAT: 'RGGB' });
  if (pattern === undefined) throw new Error('pattern expected');
  const planes = cfaPlanes(frame, pattern);
  const views: [string, FrameView][] = [
    ['full frame', frame],
    ['edge region', regionView(frame, Math.floor(width / 2), Math.floor(height / 3), width - Math.floor(width / 2), height - Math.floor(height / 3))],
    ['R plane', planes.r],
    ['G1 plane', planes.g1],
    ['G2 plane', planes.g2],
    ['B plane', planes.b],
  ];
  return views.map(([name, view]) => {
    const data = contiguousCopy(view);
    return { name, view, copy: viewOf(data, view.shape[1] ?? 0, view.shape[0] ?? 0) };
  });
}
