import { Command, CommanderError } from 'commander';
import { CoreError, describeWhere } from '@subgauge/core';
import { type CliIo, EXIT_USAGE, processIo } from './context.js';
import { inspectCommand } from './commands/inspect.js';
import { simulateCommand } from './commands/simulate.js';
import { demoCommand } from './commands/demo.js';
import { cameraCommand } from './commands/camera.js';
import { skyCommand } from './commands/sky.js';
import { auditCommand } from './commands/audit.js';
import { reportCommand } from './commands/report.js';

/** A command body: does its work and returns the exit code. */
export type Run = () => Promise<number>;

/** Builds the program; `setRun` receives the chosen command's body so `main` can await it and return its code. */
export function buildProgram(io: CliIo, setRun: (run: Run) => void): Command {
  const program = new Command('subgauge')
    .description(
      'Measure astronomical camera frames (FITS): characterize a camera by photon transfer, check whether light subs are sky-limited, and audit a night of frames. Run `subgauge demo` to see all of it on simulated data.',
    )
    .version('0.1.0')
    .showHelpAfterError('(run with --help for usage)')
    .configureOutput({ writeOut: io.stdout, writeErr: io.stderr })
    .exitOverride();
  for (const make of [inspectCommand, cameraCommand, skyCommand, auditCommand, reportCommand, simulateCommand, demoCommand]) {
    program.addCommand(
      make(io, setRun)
        .exitOverride()
        .configureOutput({ writeOut: io.stdout, writeErr: io.stderr })
        .showHelpAfterError('(run with --help for usage)'),
    );
  }
  program.addHelpText(
    'after',
    `
Exit codes: 0 success; 1 some inputs failed (or a --fail-on condition held); 2 usage error.
Results go to stdout (tables, or one JSON document with --json); progress and problems go to stderr.`,
  );
  return program;
}

/** Runs the CLI with `argv` (as process.argv) and returns the exit code. Never throws. */
export async function main(argv: readonly string[], io: CliIo = processIo()): Promise<number> {
  let run: Run | undefined;
  const program = buildProgram(io, (r) => (run = r));
  try {
    await program.parseAsync(argv as string[]);
  } catch (err) {
    if (err instanceof CommanderError) {
      if (err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.code === 'commander.help')
        return 0;
      return err.exitCode === 0 ? 0 : EXIT_USAGE;
    }
    return reportUnexpected(io, err);
  }
  if (!run) return 0;
  try {
    return await run();
  } catch (err) {
    if (err instanceof CoreError) {
      const where = describeWhere(err.where);
      io.stderr(`${err.where.file ? `${err.where.file}: ` : ''}${err.code}: ${err.message}${where ? ` (${where})` : ''}\n`);
      return err.code.startsWith('INPUT_BAD_PARAMETER') ? EXIT_USAGE : 1;
    }
    return reportUnexpected(io, err);
  }
}

function reportUnexpected(io: CliIo, err: unknown): number {
  io.stderr(
    `subgauge: internal error: ${(err as Error)?.stack ?? String(err)}\n` +
      'This is a bug in subgauge; please report it with the command line and, if you can, the file.\n',
  );
  return 1;
}
