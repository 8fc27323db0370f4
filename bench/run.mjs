#!/usr/bin/env node
// `pnpm bench`: runs our kernels and the numpy/astropy reference (../shared/bench-ref/ref_bench.py) on the same
// files in the same run, and reports times, ratios and peak memory (DESIGN section 5, bars P1-P6).
// Frames come from ../shared/bench-ref/gen.py (written to bench/frames/, not committed).
import { spawnSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, readFileSync, statSync, writeFileSync, renameSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, '..');
const shared = process.env.SUBGAUGE_SHARED ?? path.resolve(root, '..', 'shared');
const framesDir = path.join(here, 'frames');
const outDir = path.join(here, 'out');
const python = '/usr/bin/python3';
const args = process.argv.slice(2);
const reps = Number(valueOf('--reps') ?? 5);
const only = valueOf('--only'); // e.g. 26MP
const skip = new Set((valueOf('--skip') ?? '').split(',').filter(Boolean));

function valueOf(flag) {
  const i = args.indexOf(flag);
  return i >= 0 ? args[i + 1] : undefined;
}

function run(cmd, argv, opts = {}) {
  const r = spawnSync(cmd, argv, { encoding: 'utf8', maxBuffer: 1 << 28, ...opts });
  if (r.status !== 0) {
    throw new Error(`${cmd} ${argv.join(' ')} failed (${r.status}):\n${r.stderr}\n${r.stdout}`);
  }
  return r;
}

/** Peak resident set of a child process in MiB, read by a tiny python wrapper (getrusage of children). */
function peakRssMiB(cmd, argv) {
  const wrapper =
    'import resource,subprocess,sys\n' +
    'r=subprocess.run(sys.argv[1:],stdout=subprocess.DEVNULL)\n' +
    'print(r.returncode, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)';
  const r = run(python, ['-c', wrapper, cmd, ...argv]);
  const [code, kb] = r.stdout.trim().split(/\s+/).map(Number);
  if (code !== 0) throw new Error(`${cmd} exited ${code} in the memory run`);
  return kb / 1024;
}

const FRAMES = [
  { name: '11.7MP', file: 'light_11.7MP_u16.fits' },
  { name: '26MP', file: 'light_26MP_u16.fits' },
  { name: '26MP-f32', file: 'light_26MP_f32.fits' },
  { name: '61MP', file: 'light_61MP_u16.fits' },
];

function ensureFrames() {
  const missing = FRAMES.filter((f) => !existsSync(path.join(framesDir, f.file)));
  if (missing.length === 0) return;
  mkdirSync(framesDir, { recursive: true });
  process.stderr.write(`generating benchmark frames with ${path.join(shared, 'bench-ref/gen.py')} ...\n`);
  run(python, [path.join(shared, 'bench-ref', 'gen.py'), '--out', framesDir], { stdio: ['ignore', 'inherit', 'inherit'] });
}

function fmt(ms) {
  return ms >= 100 ? ms.toFixed(0) : ms.toFixed(1);
}

function main() {
  ensureFrames();
  mkdirSync(outDir, { recursive: true });
  const results = [];
  for (const f of FRAMES) {
    if (only && f.name !== only) continue;
    const file = path.join(framesDir, f.file);
    const fileMiB = statSync(file).size / 2 ** 20;
    process.stderr.write(`\n== ${f.name}: reference (numpy/astropy) ...\n`);
    const refJson = path.join(outDir, `ref_${f.name}.json`);
    run(python, [path.join(shared, 'bench-ref', 'ref_bench.py'), file, '--reps', String(reps), '--json', refJson], {
      stdio: ['ignore', 'inherit', 'inherit'],
    });
    // Python's json writes Infinity/NaN (e.g. MP/s of a step too fast to time): read them as null.
    const ref = JSON.parse(readFileSync(refJson, 'utf8').replace(/:\s*-?(Infinity|NaN)\b/g, ': null'));
    const refPeak = skip.has('memory') ? NaN : peakRssMiB(python, [path.join(shared, 'bench-ref', 'ref_bench.py'), file, '--reps', '1', '--warmup', '0']);
    process.stderr.write(`== ${f.name}: subgauge ...\n`);
    const oursJson = path.join(outDir, `ours_${f.name}.json`);
    run(process.execPath, [path.join(here, 'ours.mjs'), file, '--reps', String(reps), '--json', oursJson], {
      stdio: ['ignore', 'inherit', 'inherit'],
    });
    const ours = JSON.parse(readFileSync(oursJson, 'utf8'));
    const oursPeak = skip.has('memory') ? NaN : peakRssMiB(process.execPath, [path.join(here, 'ours.mjs'), file, '--reps', '1', '--warmup', '0', '--pipeline', 'p2']);
    results.push({ frame: f.name, file: f.file, fileMiB, ref, ours, refPeakMiB: refPeak, oursPeakMiB: oursPeak });
  }
  const cam = only || skip.has('camera') ? undefined : cameraBench();
  const p6 = only || skip.has('p6') ? undefined : headerBench();
  const p5 = only || skip.has('p5') ? undefined : jobsBench();
  report(results, p6, p5, cam);
}

/** Camera: 1024 x 1024, 2 biases, 16 flats, 4 darks; `subgauge camera` against a numpy script doing the same pair computations. */
function cameraBench() {
  const dir = path.join(framesDir, 'camera1024');
  if (!existsSync(path.join(dir, 'flat', 'flat_016.fits'))) {
    mkdirSync(dir, { recursive: true });
    run(process.execPath, [path.join(here, 'camera_set.mjs'), dir]);
  }
  const refMs = [];
  const oursMs = [];
  let refGain = NaN;
  let ourGain = NaN;
  for (let i = 0; i < 3; i++) {
    const r = JSON.parse(run(python, [path.join(here, 'camera_ref.py'), dir]).stdout);
    refMs.push(r.ms);
    refGain = r.gain;
    const t0 = performance.now();
    const o = run(process.execPath, [path.join(root, 'packages/cli/dist/bin.js'), 'camera', dir, '--json']);
    oursMs.push(performance.now() - t0);
    ourGain = JSON.parse(o.stdout).gainElectronsPerAdu;
  }
  const med = (a) => [...a].sort((x, y) => x - y)[1];
  return { refMs: med(refMs), oursMs: med(oursMs), refGain, ourGain };
}

/** P6: header-only inspection of 1000 files against an astropy getheader loop. */
function headerBench() {
  const dir = path.join(framesDir, 'headers1000');
  if (!existsSync(path.join(dir, 'h_0999.fits'))) {
    mkdirSync(dir, { recursive: true });
    process.stderr.write('writing 1000 small frames for the header benchmark ...\n');
    run(process.execPath, [path.join(here, 'ours.mjs'), '--write-header-set', dir]);
  }
  const py =
    'import sys,time,glob\nt0=time.perf_counter()\nfrom astropy.io import fits\n' +
    'fs=sorted(glob.glob(sys.argv[1]+"/*.fits"))\nt1=time.perf_counter()\n' +
    'n=0\nfor f in fs:\n  h=fits.getheader(f); n+=len(h)\n' +
    't2=time.perf_counter()\nprint(len(fs), n, (t2-t1)*1e3, (t2-t0)*1e3)';
  const times = { ref: [], refWithImport: [], ours: [], oursCli: [] };
  for (let i = 0; i < 3; i++) {
    const r = run(python, ['-c', py, dir]).stdout.trim().split(/\s+/).map(Number);
    times.ref.push(r[2]);
    times.refWithImport.push(r[3]);
    const o = JSON.parse(run(process.execPath, [path.join(here, 'ours.mjs'), '--header-loop', dir]).stdout);
    times.ours.push(o.ms);
    const t0 = performance.now();
    run(process.execPath, [path.join(root, 'packages/cli/dist/bin.js'), 'inspect', '--header', '--json', dir], { stdio: ['ignore', 'ignore', 'ignore'] });
    times.oursCli.push(performance.now() - t0);
  }
  const med = (a) => [...a].sort((x, y) => x - y)[Math.floor(a.length / 2)];
  return { files: 1000, refMs: med(times.ref), refWithImportMs: med(times.refWithImport), oursMs: med(times.ours), oursCliMs: med(times.oursCli) };
}

/**
 * P5: a folder of 20 frames audited with --jobs 2 against --jobs 1, whole processes as a user runs them. The main
 * folder holds 20 copies of the 26 MP reference frame (stars on a sky, the frame DESIGN's figures are for); a
 * second folder of 20 star-less 9 MP noise frames shows the case where start-up and warm-up weigh most. Runs
 * alternate (jobs 1, jobs 2) so drift of this shared machine hits both; reported: each pair's ratio and the median.
 */
function jobsBench() {
  const cli = path.join(root, 'packages/cli/dist/bin.js');
  const help = spawnSync(process.execPath, [cli, '--help'], { encoding: 'utf8' }).stdout ?? '';
  if (!/\baudit\b/.test(help)) return { skipped: 'the audit command does not exist yet' };
  const noiseDir = path.join(framesDir, 'folder20');
  if (!existsSync(path.join(noiseDir, 'light_020.fits'))) {
    mkdirSync(noiseDir, { recursive: true });
    run(process.execPath, [path.join(here, 'ours.mjs'), '--write-folder20', noiseDir]);
  }
  const frameDir = path.join(framesDir, 'folder20-26MP');
  mkdirSync(frameDir, { recursive: true });
  const source = path.join(framesDir, 'light_26MP_u16.fits');
  for (let i = 1; i <= 20; i++) {
    const target = path.join(frameDir, `light_${String(i).padStart(3, '0')}.fits`);
    if (!existsSync(target) || statSync(target).size !== statSync(source).size) copyFileSync(source, target);
  }
  const time = (dir, jobs) => {
    const t0 = performance.now();
    const r = spawnSync(process.execPath, [cli, 'audit', dir, '--jobs', String(jobs), '--json', '--no-progress'], { stdio: 'ignore' });
    if (r.status !== 0 && r.status !== 1) throw new Error(`audit --jobs ${jobs} ${dir} exited ${r.status}`);
    return performance.now() - t0;
  };
  // The control: fixed CPU work in one thread against the same work split over two (bench/scaling.mjs), run
  // beside each audit pair, so the machine's own two-thread speed-up at that moment stands next to ours.
  const scaling = path.join(here, 'scaling.mjs');
  const control = (threads, units) => Number(run(process.execPath, [scaling, String(threads), String(units)]).stdout.trim());
  const median = (values) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
  const pairs = (dir, n, withControl) => {
    time(dir, 1); // page cache and disk warm
    const out = [];
    for (let i = 0; i < n; i++) {
      const one = time(dir, 1);
      const two = time(dir, 2);
      const pair = { jobs1Ms: one, jobs2Ms: two, ratio: one / two };
      if (withControl) {
        const c1 = control(1, 30);
        const c2 = control(2, 15);
        Object.assign(pair, { control1Ms: c1, control2Ms: c2, controlRatio: c1 / c2 });
      }
      out.push(pair);
    }
    const result = { pairs: out, medianRatio: median(out.map((p) => p.ratio)) };
    if (withControl) result.medianControlRatio = median(out.map((p) => p.controlRatio));
    return result;
  };
  return { frames: 20, main: pairs(frameDir, 7, true), noise: pairs(noiseDir, 3, false) };
}

function report(results, p6, p5, cam) {
  const lines = [];
  const cpu = os.cpus()[0]?.model ?? 'unknown CPU';
  const refVersions = results[0]?.ref ? `numpy/astropy via ${python}` : '';
  lines.push('# Benchmark results', '');
  lines.push(`Machine: ${cpu}, ${os.cpus().length} cores, ${(os.totalmem() / 2 ** 30).toFixed(0)} GiB; Node ${process.version}; ${refVersions}.`);
  lines.push(`Run: ${new Date().toISOString()}, ${reps} timed repetitions after 1 warm-up, medians shown; files in the page cache.`);
  lines.push('Reference: `../shared/bench-ref/ref_bench.py` (astropy read, np.median, mad_std, sigma_clipped_stats, 64-px box medians).');
  lines.push('Ratio = reference time / our time (higher is better for us). Memory = peak resident set of one process doing one pass.', '');
  lines.push('| frame | step | reference ms | subgauge ms | ratio |', '|---|---|---:|---:|---:|');
  for (const r of results) {
    const t = r.ref.timings;
    const o = r.ours.timings;
    const refRead = t.a_read.median_ms + t.a2_native.median_ms;
    const rows = [
      ['decode from bytes in memory, handed over (parseFits inPlace) vs astropy read', refRead, o.decode_in_place],
      ['decode from bytes in memory, kept (parseFits, copies) vs astropy read', refRead, o.decode_bytes],
      ['read + decode (readFitsFile) vs astropy read', refRead, o.read_decode],
      ['median', t.b_median.median_ms, o.median],
      ['MAD-sigma', t.c_mad_std.median_ms, o.mad_sigma],
      ['3-sigma clipped stats', t.d_sigclip.median_ms, o.sigma_clip],
      ['64-px box-median mesh', t.e_mesh64.median_ms, o.mesh64],
      ['P1: read + median + MAD-sigma', refRead + t.b_median.median_ms + t.c_mad_std.median_ms, o.p1],
      ['P2: whole reference pipeline', t.total.median_ms, o.p2],
    ];
    if (o.p3 !== undefined) rows.push(['P3: full per-frame audit (vs reference P2 total)', t.total.median_ms, o.p3]);
    for (const [step, refMs, ourMs] of rows) {
      lines.push(`| ${r.frame} | ${step} | ${fmt(refMs)} | ${ourMs === undefined ? '-' : fmt(ourMs)} | ${ourMs === undefined ? '-' : (refMs / ourMs).toFixed(2) + 'x'} |`);
    }
  }
  lines.push('', '| frame | file MiB | reference peak MiB | subgauge peak MiB | subgauge / file size (P4) |', '|---|---:|---:|---:|---:|');
  for (const r of results) {
    lines.push(`| ${r.frame} | ${r.fileMiB.toFixed(1)} | ${r.refPeakMiB.toFixed(0)} | ${r.oursPeakMiB.toFixed(0)} | ${(r.oursPeakMiB / r.fileMiB).toFixed(2)}x |`);
  }
  lines.push('', '| frame | check | reference | subgauge | equal |', '|---|---|---|---|---|');
  for (const r of results) {
    // The float32 frame holds the uint16 frame's values: astropy's clipped statistics on native float32 accumulate
    // in float32 (DESIGN section 5), so its clipped values are checked against the uint16 run of the same pixels.
    const twin = r.frame.endsWith('-f32') ? results.find((x) => x.frame === r.frame.replace(/-f32$/, '')) : undefined;
    const a = twin ? { ...r.ref.results, sigclip: twin.ref.results.sigclip } : r.ref.results;
    const b = r.ours.results;
    if (twin) lines.push(`| ${r.frame} | (astropy float32 clipped values, not used) | ${r.ref.results.sigclip.map((v) => v.toPrecision(10)).join(', ')} | | |`);
    const rel = (x, y) => Math.abs(x - y) / Math.max(Math.abs(x), 1e-300);
    const checks = [
      ['median', a.median, b.median, a.median === b.median ? 'exact' : 'NO'],
      ['MAD-sigma', a.mad_std, b.madSigma, rel(a.mad_std, b.madSigma) <= 1e-9 ? '1e-9' : 'NO'],
      ['clipped mean', a.sigclip[0], b.sigclip[0], rel(a.sigclip[0], b.sigclip[0]) <= 1e-9 ? '1e-9' : 'NO'],
      ['clipped median', a.sigclip[1], b.sigclip[1], a.sigclip[1] === b.sigclip[1] ? 'exact' : 'NO'],
      ['clipped std', a.sigclip[2], b.sigclip[2], rel(a.sigclip[2], b.sigclip[2]) <= 1e-9 ? '1e-9' : 'NO'],
      ['median of 64-px mesh', a.mesh_median, b.meshMedian, a.mesh_median === b.meshMedian ? 'exact' : 'NO'],
    ];
    for (const [name, x, y, eq] of checks) lines.push(`| ${r.frame} | ${name} | ${x} | ${y} | ${eq} |`);
  }
  if (results.some((r) => r.frame === '26MP-f32')) {
    lines.push('', 'Note: for the float32 frame the clipped statistics are compared with the reference run on the uint16 frame holding the same values; astropy 5.2.1 on native float32 accumulates in float32 and is off (DESIGN section 5). Ours accumulate in float64.');
  }
  if (cam) {
    lines.push('', `Camera (1024 x 1024: 2 biases, 16 flats, 4 darks; whole processes, imports and file reads included): numpy/astropy pair computations ${fmt(cam.refMs)} ms, \`subgauge camera --json\` ${fmt(cam.oursMs)} ms, ours / reference = ${(cam.oursMs / cam.refMs).toFixed(2)} (bar: at most 1.5); gains ${cam.refGain.toFixed(4)} / ${cam.ourGain.toFixed(4)} e-/ADU.`);
  }
  if (p6) {
    lines.push('', `P6 header-only reads of ${p6.files} files: astropy getheader loop ${fmt(p6.refMs)} ms (${fmt(p6.refWithImportMs)} ms with the astropy import); subgauge in-process ${fmt(p6.oursMs)} ms (${(p6.refMs / p6.oursMs).toFixed(1)}x); the whole \`subgauge inspect --header --json\` process ${fmt(p6.oursCliMs)} ms (${(p6.refWithImportMs / p6.oursCliMs).toFixed(1)}x against the loop with its import).`);
  }
  if (p5) {
    if (p5.skipped) lines.push('', `P5: ${p5.skipped}.`);
    else {
      const show = (r) => r.pairs.map((p) => `${fmt(p.jobs1Ms)} / ${fmt(p.jobs2Ms)} ms (${p.ratio.toFixed(2)}x)`).join(', ');
      lines.push('', `P5 \`subgauge audit\` of ${p5.frames} frames, --jobs 1 / --jobs 2, whole processes, pairs in turn:`);
      lines.push(`- 20 copies of the 26 MP frame: ${show(p5.main)}; median speed-up ${p5.main.medianRatio.toFixed(2)}x.`);
      lines.push(`- 20 star-less 9 MP noise frames: ${show(p5.noise)}; median speed-up ${p5.noise.medianRatio.toFixed(2)}x.`);
      const control = p5.main.pairs.map((p) => `${p.controlRatio.toFixed(2)}x`).join(', ');
      lines.push(`- Control, the machine alone (\`bench/scaling.mjs\`: the same fixed CPU work in one thread, then split over two), run after each pair above: ${control}; median ${p5.main.medianControlRatio.toFixed(2)}x. A perfectly parallel job could get no more than this here; the audit got ${(100 * p5.main.medianRatio / p5.main.medianControlRatio).toFixed(0)} % of it.`);
    }
  }
  const text = lines.join('\n') + '\n';
  process.stdout.write('\n' + text);
  const target = path.join(here, 'RESULTS.md');
  writeFileSync(target + '.tmp', text);
  renameSync(target + '.tmp', target);
  writeFileSync(path.join(outDir, 'results.json'), JSON.stringify({ results, p6, p5 }, null, 1));
  process.stderr.write(`written ${path.relative(root, target)}\n`);
}

main();
