import { randomBytes } from 'node:crypto';
import { open, rename, rm } from 'node:fs/promises';
import type { FileHandle } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { CoreError } from '../errors.js';

/**
 * Write bytes to `path` atomically: a temporary file in the same folder is written, flushed to disk
 * (fsync) and renamed over `path`, so readers see the old file or the whole new one, never a part.
 * On failure the temporary file is removed and `path` is left as it was.
 *
 * @param path - destination file.
 * @param bytes - the complete contents.
 * @throws CoreError 'OUTPUT_WRITE_FAILED' with `where.file` (the cause is attached).
 * @example await writeFileAtomic('out/session.fits', encodeFits(images));
 */
export async function writeFileAtomic(path: string, bytes: Uint8Array): Promise<void> {
  const tmp = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`);
  let fh: FileHandle | undefined;
  try {
    fh = await open(tmp, 'wx', 0o666);
    await fh.writeFile(bytes);
    await fh.sync();
    await fh.close();
    fh = undefined;
    await rename(tmp, path);
  } catch (e) {
    await fh?.close().catch(() => undefined);
    await rm(tmp, { force: true }).catch(() => undefined);
    const message = e instanceof Error ? e.message : String(e);
    throw new CoreError('OUTPUT_WRITE_FAILED', `cannot write ${path}: ${message}`, { file: path }, { cause: e });
  }
  // Make the rename itself durable where the platform allows syncing a directory (best effort).
  let dir: FileHandle | undefined;
  try {
    dir = await open(dirname(path), 'r');
    await dir.sync();
  } catch {
    // Some platforms and file systems refuse fsync on directories; the data are already in place.
  } finally {
    await dir?.close().catch(() => undefined);
  }
}
