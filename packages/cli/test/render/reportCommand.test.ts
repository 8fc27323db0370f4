import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { CliIo } from '../../src/context.js';
import { reportCommand } from '../../src/commands/report.js';
import { writeHtmlReport } from '../../src/commands/reportFiles.js';
import type { Run } from '../../src/main.js';

const dir = mkdtempSync(path.join(os.tmpdir(), 'subgauge-report-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const camera = {
  schema: 'subgauge.camera/1',
  gainElectronsPerAdu: 1.1,
  gainUncertaintyElectronsPerAdu: 0.01,
  readNoiseElectrons: 2.5,
  fullWellElectrons: 30000,
  curve: [100, 1000, 10000].map((s) => ({ signalAdu: s, varianceAdu2: s / 1.1 + 5, inFit: true, gainElectronsPerAdu: 1.1 })),
  fit: { gainElectronsPerAdu: 1.1, slopeAduPerElectron: 1 / 1.1, interceptAdu2: 5 },
};

async function run(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '';
  let stderr = '';
  const io: CliIo = { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), stderrIsTTY: false, color: false, cwd: dir };
  let body: Run | undefined;
  const cmd = reportCommand(io, (r) => (body = r)).exitOverride().configureOutput({ writeOut: io.stdout, writeErr: io.stderr });
  await cmd.parseAsync(args, { from: 'user' });
  const code = body ? await body() : -1;
  return { code, stdout, stderr };
}

describe('subgauge report', () => {
  it('reportCommand(io, setRun) with result.json -o out.html writes the report and prints its path', async () => {
    writeFileSync(path.join(dir, 'camera.json'), JSON.stringify(camera));
    const r = await run(['camera.json', '-o', 'out.html', '--title', 'Bench test']);
    expect(r.code).toBe(0);
    const out = path.join(dir, 'out.html');
    expect(r.stdout.trim()).toBe(out);
    const html = readFileSync(out, 'utf8');
    expect(html).toContain('id="section-camera"');
    expect(html).toContain('<title>Bench test</title>');
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });

  it('reportCommand(io, setRun) with a bad file names the file and field, exits 1 and writes nothing', async () => {
    writeFileSync(path.join(dir, 'bad.json'), JSON.stringify({ ...camera, curve: [{ signalAdu: 'x', varianceAdu2: 1, inFit: true }] }));
    writeFileSync(path.join(dir, 'notjson.json'), '{ nope');
    const r = await run(['camera.json', 'bad.json', 'notjson.json', 'missing.json', '-o', 'bad.html']);
    expect(r.code).toBe(1);
    expect(r.stderr).toContain('bad.json: INPUT_BAD_RESULT: subgauge.camera/1: curve[0].signalAdu');
    expect(r.stderr).toContain('notjson.json: INPUT_BAD_RESULT');
    expect(r.stderr).toContain('missing.json: INPUT_NOT_FOUND');
    expect(existsSync(path.join(dir, 'bad.html'))).toBe(false);
  });

  it('reportCommand(io, setRun) without -o is a usage error', async () => {
    await expect(run(['camera.json'])).rejects.toMatchObject({ code: 'commander.missingMandatoryOptionValue' });
  });

  it('writeHtmlReport(path, docs, opts) validates in-memory results and writes atomically', async () => {
    const target = await writeHtmlReport(path.join(dir, 'mem.html'), [camera], { generatedAt: '2031-10-04 21:00 UTC' });
    expect(readFileSync(target, 'utf8')).toContain('generated 2031-10-04 21:00 UTC');
    await expect(writeHtmlReport(path.join(dir, 'mem2.html'), [{ schema: 'subgauge.sky/1' }])).rejects.toMatchObject({ code: 'INPUT_BAD_RESULT' });
    expect(existsSync(path.join(dir, 'mem2.html'))).toBe(false);
  });
});
