// Test-only: decode a PNG with the CLI's pngjs (for the browser test, which lives outside the package).
import { PNG } from 'pngjs';

/** RGBA pixels and size of a PNG. */
export function decodePng(bytes: Uint8Array): { width: number; height: number; data: Uint8Array } {
  const png = PNG.sync.read(Buffer.from(bytes));
  return { width: png.width, height: png.height, data: png.data };
}
