// Result documents to and from files, and the HTML report writer: loaded on demand (the renderer and the zod
// schemas are a good part of the program's start-up, and most runs write no report).
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { CoreError, InvalidInputError } from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { toJson } from '../render/json.js';
import { renderReport, type ReportOptions } from '../render/html/index.js';
import { parseResultDocument, type ResultDocument } from '../schemas/index.js';

/**
 * Validate in-memory results (e.g. a `CameraResult`) as the report reads them from files: a JSON round trip first
 * (non-finite numbers become null, as in `--json` output), then the zod schema of their `schema` tag.
 * @throws InvalidInputError `INPUT_BAD_RESULT` naming the document and the field
 */
export function toResultDocuments(docs: readonly unknown[], sources: readonly string[] = []): ResultDocument[] {
  return docs.map((d, i) => parseResultDocument(JSON.parse(toJson(d)) as unknown, sources[i] ?? `document ${i + 1}`));
}

/**
 * Render results to a self-contained HTML file, written atomically (the `--html <file>` of camera, sky, audit
 * and demo).
 * @param file - the HTML file to write
 * @param docs - result documents (`subgauge.camera/1`, `subgauge.sky/1`, `subgauge.audit/1`), plain or parsed
 * @param opts - title, time, thumbnails and background map (see `ReportOptions`)
 * @returns the absolute path written
 * @throws InvalidInputError `INPUT_BAD_RESULT` for a document that fails validation; CoreError
 *   `OUTPUT_WRITE_FAILED` when the file cannot be written
 * @example await writeHtmlReport('night.html', [cameraResult], { generatedAt: new Date().toISOString() })
 */
export async function writeHtmlReport(file: string, docs: readonly unknown[], opts: ReportOptions = {}): Promise<string> {
  const html = renderReport(toResultDocuments(docs, opts.sources ?? []), opts);
  const target = path.resolve(file);
  await writeFileAtomic(target, new TextEncoder().encode(html));
  return target;
}

/** Read and validate one result file (`file` as given, for messages; read relative to `cwd`). */
export async function readResultFile(file: string, cwd = process.cwd()): Promise<ResultDocument> {
  let text: string;
  try {
    text = await readFile(path.resolve(cwd, file), 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code === 'ENOENT' ? 'INPUT_NOT_FOUND' : 'INPUT_READ_FAILED';
    throw new CoreError(code, (e as Error).message, { file }, { cause: e });
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw new InvalidInputError('INPUT_BAD_RESULT', `not JSON (${(e as Error).message})`, { file }, { cause: e });
  }
  return parseResultDocument(value, file);
}
