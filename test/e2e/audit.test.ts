import { readFileSync, writeFileSync, copyFileSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../helpers/cli.js';

interface FrameTruth { file: string; kind: string; defects: { kind: string }[]; expectedReasons: string[] }

// Truth: the project's simulator injects each defect on its own frame and lists the reason codes an audit should
// give (truth.json `expectedReasons`). Several seeds; clean frames must be kept (>= 95 % over the runs).
describe.each([2, 21, 22])('subgauge audit on a simulated night (seed %i)', (seed) => {
  const t = tempDir();
  const session = path.join(t.dir, 'night');
  let truth: { frames: FrameTruth[] };
  beforeAll(async () => {
    expect((await runCli(['simulate', session, '--seed', String(seed), '--width', '384', '--height', '288', '--quiet'])).code).toBe(0);
    truth = JSON.parse(readFileSync(path.join(session, 'truth.json'), 'utf8'));
  }, 120_000);
  afterAll(() => t.cleanup());

  it('audit --json catches every injected defect with its reason code and keeps the clean frames', async () => {
    const r = await runCli(['audit', session, '--json', '--jobs', '1']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.schema).toBe('subgauge.audit/1');
    const lights = truth.frames.filter((f) => f.kind === 'light');
    expect(doc.frames).toHaveLength(lights.length);
    let clean = 0;
    let cleanKept = 0;
    for (const f of lights) {
      const rec = doc.frames.find((x: { file: string }) => x.file.endsWith(f.file));
      expect(rec, f.file).toBeDefined();
      if (f.defects.length === 0) {
        clean++;
        if (rec.verdict === 'keep') cleanKept++;
      } else {
        expect(rec.verdict, `${f.file} ${f.defects.map((d) => d.kind)}`).not.toBe('keep');
        for (const reason of f.expectedReasons) expect(rec.reasons, `${f.file}: ${rec.reasons}`).toContain(reason);
      }
    }
    expect(cleanKept / clean).toBeGreaterThanOrEqual(0.95);
    expect(doc.forecast[0].kept.frameCount).toBe(doc.counts.keep);
  });
});

describe('subgauge audit outputs and failures', () => {
  const t = tempDir();
  const session = path.join(t.dir, 'night');
  beforeAll(async () => {
    expect((await runCli(['simulate', session, '--seed', '4', '--width', '256', '--height', '192', '--quiet'])).code).toBe(0);
  }, 120_000);
  afterAll(() => t.cleanup());

  it('audit prints rejects and reviews first, then the table, calibration and forecast', async () => {
    const r = await runCli(['audit', path.join(session, 'light'), '--jobs', '1']);
    expect(r.code).toBe(0);
    const iReject = r.stdout.indexOf('\nReject');
    const iFrames = r.stdout.indexOf('\nFrames');
    expect(iReject).toBeGreaterThan(0);
    expect(iFrames).toBeGreaterThan(iReject);
    expect(r.stdout).toContain('Stack forecast');
    expect(r.stdout).toMatch(/effective frames \(Kish\)/);
  });

  it('audit --html writes a self-contained report with the frames table and thumbnails', async () => {
    const html = path.join(t.dir, 'audit.html');
    const r = await runCli(['audit', path.join(session, 'light'), '--html', html, '--jobs', '1', '--quiet']);
    expect(r.code).toBe(0);
    const text = readFileSync(html, 'utf8');
    expect(text).toContain('id="section-audit"');
    expect(text).toMatch(/Content-Security-Policy/);
    expect(text).toMatch(/data:image\/png;base64,/);
  });

  it('audit --fail-on reject exits 1 when a frame is rejected', async () => {
    const r = await runCli(['audit', path.join(session, 'light'), '--fail-on', 'reject', '--jobs', '1', '--quiet']);
    expect(r.code).toBe(1);
  });

  it('audit reports an unreadable file with `unreadable`, goes on, and exits 1', async () => {
    const dir = path.join(t.dir, 'mixed');
    mkdirSync(dir, { recursive: true });
    for (const f of ['light_001.fits', 'light_002.fits', 'light_004.fits']) copyFileSync(path.join(session, 'light', f), path.join(dir, f));
    writeFileSync(path.join(dir, 'broken.fits'), 'SIMPLE  =                    T'.padEnd(2880, ' '));
    const r = await runCli(['audit', dir, '--json', '--jobs', '1']);
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.stdout);
    const broken = doc.frames.find((f: { file: string }) => f.file.endsWith('broken.fits'));
    expect(broken).toMatchObject({ verdict: 'reject', reasons: ['unreadable'] });
    expect(broken.error.code).toMatch(/^FITS_/);
    expect(doc.frames.filter((f: { verdict: string }) => f.verdict !== 'reject')).toHaveLength(3);
    // the summary line tells the lights from the file it could not read
    const text = await runCli(['audit', dir, '--jobs', '1', '--no-progress']);
    expect(text.stdout).toMatch(/^Audit of 3 light frame\(s\) and 1 unreadable file\(s\): \d+ keep, \d+ review, [1-9]\d* reject/);
  });

  it('audit --limits with a bad field names the field', async () => {
    const limits = path.join(t.dir, 'limits.json');
    writeFileSync(limits, JSON.stringify({ softFocus: { ratioLimit: -2 } }));
    const r = await runCli(['audit', path.join(session, 'light'), '--limits', limits, '--jobs', '1']);
    expect(r.code).not.toBe(0);
    expect(r.stderr).toMatch(/softFocus/);
  });

  it('audit --csv neutralises cells that would run as spreadsheet formulas (OWASP CSV injection guidance)', async () => {
    const csv = path.join(t.dir, 'audit.csv');
    const r = await runCli(['audit', path.join(session, 'light'), '--csv', csv, '--jobs', '1', '--quiet']);
    expect(r.code).toBe(0);
    const text = readFileSync(csv, 'utf8');
    expect(text.split('\r\n')[0]).toMatch(/^file,verdict,reasons/);
    for (const line of text.split('\r\n').slice(1)) for (const cell of line.split(',')) expect(cell).not.toMatch(/^[=+@]/);
  });
});

describe('subgauge audit --jobs 2 (worker threads, built CLI)', () => {
  const t = tempDir();
  const session = path.join(t.dir, 'night');
  afterAll(() => t.cleanup());
  it('gives the same result in the same order as --jobs 1', async () => {
    const { spawnSync } = await import('node:child_process');
    const { existsSync } = await import('node:fs');
    const bin = path.resolve('packages/cli/dist/bin.js');
    expect(existsSync(bin), 'the CLI must be built first (pnpm test builds it)').toBe(true);
    expect((await runCli(['simulate', session, '--seed', '9', '--width', '256', '--height', '192', '--quiet'])).code).toBe(0);
    const run = (jobs: number) => spawnSync(process.execPath, [bin, 'audit', session, '--json', '--jobs', String(jobs)], { encoding: 'utf8', maxBuffer: 1 << 26 });
    const one = run(1);
    const two = run(2);
    expect(two.status, two.stderr).toBe(0);
    expect(JSON.parse(two.stdout)).toEqual(JSON.parse(one.stdout));
  }, 120_000);
});

describe('subgauge audit --jobs 2: the restarted pool process (built CLI)', () => {
  const t = tempDir();
  const session = path.join(t.dir, 'night');
  afterAll(() => t.cleanup());
  it('passes the exit code through, gives what an unrestarted run gives, and ends on SIGTERM with its child', async () => {
    const { spawn, spawnSync } = await import('node:child_process');
    const bin = path.resolve('packages/cli/dist/bin.js');
    expect((await runCli(['simulate', session, '--seed', '4', '--width', '256', '--height', '192', '--quiet'])).code).toBe(0);
    const run = (env: NodeJS.ProcessEnv, ...extra: string[]) =>
      spawnSync(process.execPath, [bin, 'audit', session, '--json', '--jobs', '2', ...extra], { encoding: 'utf8', maxBuffer: 1 << 26, env: { ...process.env, ...env } });
    const restarted = run({});
    const direct = run({ SUBGAUGE_NO_RESTART: '1' });
    expect(restarted.status, restarted.stderr).toBe(0);
    expect(JSON.parse(restarted.stdout)).toEqual(JSON.parse(direct.stdout));
    // the simulated night holds injected defects, so --fail-on review ends with exit code 1 in both
    expect(run({}, '--fail-on', 'review').status).toBe(1);
    expect(run({ SUBGAUGE_NO_RESTART: '1' }, '--fail-on', 'review').status).toBe(1);
    const child = spawn(process.execPath, [bin, 'audit', session, '--jobs', '2', '--no-progress'], { stdio: 'ignore' });
    // the run takes about a second; at 300 ms the restarted process is measuring, and the parent ends only
    // after it, by the same signal
    await new Promise((r) => setTimeout(r, 300));
    child.kill('SIGTERM');
    const [code, signal] = await new Promise<[number | null, string | null]>((resolve) => child.on('exit', (c, s) => resolve([c, s])));
    expect({ code, signal }).toEqual({ code: null, signal: 'SIGTERM' });
  }, 120_000);
});
