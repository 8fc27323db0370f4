import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { main } from '../../packages/cli/src/main.js';
import type { CliIo } from '../../packages/cli/src/context.js';

export interface CliRun {
  code: number;
  stdout: string;
  stderr: string;
}

/** Run the CLI in-process (argv without `node subgauge`), capturing stdout and stderr. */
export async function runCli(args: string[], cwd = process.cwd()): Promise<CliRun> {
  let stdout = '';
  let stderr = '';
  const io: CliIo = {
    stdout: (t) => void (stdout += t),
    stderr: (t) => void (stderr += t),
    stderrIsTTY: false,
    color: false,
    cwd,
  };
  const code = await main(['node', 'subgauge', ...args], io);
  return { code, stdout, stderr };
}

/** A fresh temporary folder, removed by the returned cleanup function. */
export function tempDir(prefix = 'subgauge-test-'): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(path.join(os.tmpdir(), prefix));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}
