import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { Command } from 'commander';
import { CoreError, InvalidInputError } from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED } from '../context.js';
import type { Run } from '../main.js';
import { toJson } from '../render/json.js';
import { renderReport, type ReportOptions } from '../render/html/index.js';
import { parseResultDocument, type ResultDocument } from '../schemas/index.js';

interface ReportCommandOptions {
  out: string;
  title?: string;
  quiet?: boolean;
}

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

export function reportCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const cmd = new Command('report')
    .summary('make a self-contained HTML report from saved results')
    .description(
      'Make one self-contained HTML file (inline plots, no scripts, nothing loaded from the network) from result documents saved with --json/--out by camera, sky and audit.',
    )
    .argument('<results...>', 'result JSON files (subgauge.camera/1, subgauge.sky/1, subgauge.audit/1)')
    .requiredOption('-o, --out <file>', 'the HTML file to write (written atomically)')
    .option('--title <text>', 'heading of the report')
    .option('--quiet', 'print only errors');
  cmd.addHelpText(
    'after',
    `
Examples:
  subgauge camera calib --out camera.json && subgauge report camera.json -o camera.html
  subgauge report camera.json sky.json audit.json -o night.html --title "Night of 14 March"`,
  );
  cmd.action((files: string[], opts: ReportCommandOptions) => {
    setRun(async () => {
      const docs: ResultDocument[] = [];
      let failed = 0;
      for (const file of files) {
        try {
          docs.push(await readResultFile(file, io.cwd));
        } catch (e) {
          if (!(e instanceof CoreError)) throw e;
          failed++;
          io.stderr(`${e.where.file ?? file}: ${e.code}: ${e.message}\n`);
        }
      }
      if (failed) {
        io.stderr(`no report written: ${failed} of ${files.length} result file(s) could not be used\n`);
        return EXIT_SOME_FAILED;
      }
      const html = renderReport(docs, {
        ...(opts.title !== undefined ? { title: opts.title } : {}),
        generatedAt: new Date().toISOString().replace(/\.\d+Z$/, 'Z'),
        sources: files,
      });
      const target = path.resolve(io.cwd, opts.out);
      await writeFileAtomic(target, new TextEncoder().encode(html));
      io.stdout(`${target}\n`);
      return EXIT_OK;
    });
  });
  return cmd;
}
