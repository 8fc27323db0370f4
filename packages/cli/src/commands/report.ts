import path from 'node:path';
import { Command } from 'commander';
import { CoreError } from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED } from '../context.js';
import type { Run } from '../main.js';
import type { ResultDocument } from '../schemas/index.js';

interface ReportCommandOptions {
  out: string;
  title?: string;
  quiet?: boolean;
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
      const { readResultFile } = await import('./reportFiles.js');
      const { renderReport } = await import('../render/html/index.js');
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
