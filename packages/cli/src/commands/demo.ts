import { mkdtemp, readFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { Command, Option } from 'commander';
import { cameraProfileFromResult, DEFAULT_MAX_PIXELS, SESSION_PRESETS, type SessionTruth } from '@subgauge/core';
import { writeFileAtomic } from '@subgauge/core/node';
import { type CliIo, EXIT_OK, EXIT_SOME_FAILED, palette } from '../context.js';
import type { Run } from '../main.js';
import { parseNonNegativeInt, parsePositiveInt } from '../options.js';
import { toJson } from '../render/json.js';
import { Progress } from '../render/progress.js';
import { fmtSig, renderTable } from '../render/table.js';
import { runCamera } from './camera.js';
import { runSky } from './sky.js';
import { auditReportExtras, runAudit } from './audit.js';
import { writeSimulatedSession } from './simulate.js';

interface DemoOptions {
  preset: string;
  seed: number;
  dir?: string;
  progress: boolean;
  jobs?: number;
}

const ratio = (measured: number | null | undefined, truth: number | null | undefined) =>
  measured == null || truth == null || truth === 0 ? '-' : `${measured / truth >= 1 ? '+' : ''}${(100 * (measured / truth - 1)).toFixed(1)} %`;

export function demoCommand(io: CliIo, setRun: (run: Run) => void): Command {
  const presets = Object.keys(SESSION_PRESETS);
  const cmd = new Command('demo')
    .summary('simulate a night, measure it, and say where the results are')
    .description(
      'Simulate a night with an invented camera (bias, dark and flat pairs and lights with injected defects, known truth) in a temporary folder, then run camera, sky and audit on it, print measured beside true values, and say where everything was written.',
    )
    .addOption(new Option('--preset <name>', 'camera and session preset').choices(presets).default(presets[0]))
    .addOption(new Option('--seed <n>', 'random seed').argParser(parseNonNegativeInt).default(1))
    .option('--dir <folder>', 'write the session here instead of a new temporary folder')
    .addOption(new Option('--jobs <n>', 'worker threads for the audit (default: number of cores)').argParser(parsePositiveInt))
    .option('--no-progress', 'no progress bar on stderr');
  cmd.action((opts: DemoOptions) => {
    setRun(async () => {
      const p = palette(io);
      const dir = opts.dir ?? (await mkdtemp(path.join(os.tmpdir(), 'subgauge-demo-')));
      const session = path.join(dir, 'session');
      const write = (name: string, doc: unknown) => writeFileAtomic(path.join(dir, name), new TextEncoder().encode(toJson(doc)));
      const common = { maxPixels: DEFAULT_MAX_PIXELS, progress: opts.progress, quiet: true };
      io.stdout(p.head(`subgauge demo: preset ${opts.preset}, seed ${opts.seed}`) + '\n\n');

      const progress = new Progress(io, opts.progress, 'simulating');
      const sim = await writeSimulatedSession(session, { preset: opts.preset, seed: opts.seed }, (d, t) => progress.update(d, t));
      progress.stop();
      const truth = JSON.parse(await readFile(sim.truthFile, 'utf8')) as SessionTruth;
      const counts = Object.entries(sim.counts).map(([k, n]) => `${n} ${k}`).join(', ');
      io.stdout(`1. simulated ${sim.files} frames of the invented camera "${truth.camera.name}" (${counts})\n   in ${session}\n\n`);

      // Camera: photon transfer on the calibration frames.
      const { result: camera, failures } = await runCamera([session], { ...common, kind: [] }, io);
      if (!camera) return EXIT_SOME_FAILED;
      await write('camera.json', camera);
      const profilePath = path.join(dir, 'camera-profile.json');
      await writeFileAtomic(profilePath, new TextEncoder().encode(toJson(cameraProfileFromResult(camera))));
      const c = truth.camera;
      io.stdout('2. camera (photon transfer), measured beside the truth:\n');
      io.stdout(
        renderTable(
          [{ header: 'quantity' }, { header: 'measured', align: 'right' }, { header: 'true', align: 'right' }, { header: 'difference', align: 'right' }],
          [
            ['gain e-/ADU', fmtSig(camera.gainElectronsPerAdu, 4), fmtSig(c.gainElectronsPerAdu, 4), ratio(camera.gainElectronsPerAdu, c.gainElectronsPerAdu)],
            ['read noise e-', fmtSig(camera.readNoiseElectrons, 3), fmtSig(c.readNoiseElectrons, 3), ratio(camera.readNoiseElectrons, c.readNoiseElectrons)],
            ['offset ADU', fmtSig(camera.offsetAdu, 5), fmtSig(c.offsetAdu, 5), ratio(camera.offsetAdu, c.offsetAdu)],
            ['full well e-', fmtSig(camera.fullWellElectrons, 5), fmtSig(truth.derived.saturation.electrons, 5), ratio(camera.fullWellElectrons, truth.derived.saturation.electrons)],
            [
              'dark e-/px/s',
              fmtSig(camera.darkCurrentElectronsPerSecond ?? NaN, 3),
              fmtSig(truth.derived.darkCurrentAtSetTemperatureElectronsPerSecond, 3),
              ratio(camera.darkCurrentElectronsPerSecond, truth.derived.darkCurrentAtSetTemperatureElectronsPerSecond),
            ],
          ],
          '   ',
        ),
      );
      io.stdout(`   profile: ${profilePath}\n\n`);

      // Sky: the lights with the measured profile.
      const sky = await runSky([session], { ...common, camera: profilePath, maxPenalty: 5, rule: 'darker-half', total: 4 * 3600 }, io);
      await write('sky.json', sky);
      io.stdout('3. sky-limited check of the lights with the measured camera:\n');
      for (const f of sky.filters) {
        io.stdout(
          `   filter ${f.filter}: ${f.skyLimitedSubs} of ${f.subs} subs sky-limited; sky ${fmtSig(f.recommendationRateElectronsPerSecond, 3)} e-/px/s; shortest sub for <= 5 % read-noise penalty ${Math.ceil(f.recommendedMinimumExposureSeconds)} s (subs taken: ${fmtSig(f.medianExposureSeconds, 4)} s)\n`,
        );
      }
      io.stdout('\n');

      // Audit: the whole night.
      const audit = await runAudit([session], { ...common, ...(opts.jobs !== undefined ? { jobs: opts.jobs } : {}), thumbnails: true }, io);
      await write('audit.json', audit.result);
      const r = audit.result;
      io.stdout(`4. audit of ${r.counts.frames} lights: ${r.counts.keep} keep, ${r.counts.review} review, ${r.counts.reject} reject\n`);
      const injected = truth.frames.filter((f) => f.kind === 'light' && f.defects.length > 0);
      let caught = 0;
      for (const f of injected) {
        const rec = r.frames.find((x) => x.file.endsWith(f.file));
        const ok = rec !== undefined && f.expectedReasons.every((reason) => (rec.reasons as string[]).includes(reason));
        if (ok) caught++;
        io.stdout(`   ${ok ? p.good('caught') : p.bad('MISSED')}  ${f.file}: injected ${f.defects.map((d) => d.kind).join(', ')} -> ${rec ? `${rec.verdict} (${rec.reasons.join(', ')})` : 'not audited'}\n`);
      }
      io.stdout(`   ${caught} of ${injected.length} injected defects caught with the expected reason\n\n`);

      const { writeHtmlReport } = await import('./reportFiles.js'); // the HTML renderer loads only when asked for
      const report = await writeHtmlReport(path.join(dir, 'report.html'), [camera, sky, r], {
        title: `subgauge demo: ${truth.camera.name} at ${truth.site.observatory}`,
        generatedAt: new Date().toISOString(),
        ...(await auditReportExtras(audit)),
      });
      io.stdout(`5. report: ${p.bold(report)}\n   (self-contained HTML: open it in any browser, no network needed)\n\n`);
      io.stdout(`Results (JSON): ${path.join(dir, 'camera.json')}, ${path.join(dir, 'sky.json')}, ${path.join(dir, 'audit.json')}\n`);
      io.stdout(`Everything is in ${dir}\n`);
      return failures.length || sky.unreadable.length ? EXIT_SOME_FAILED : EXIT_OK;
    });
  });
  return cmd;
}
