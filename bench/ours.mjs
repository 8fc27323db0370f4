#!/usr/bin/env node
// Our side of the benchmark: the same steps as ../shared/bench-ref/ref_bench.py on one file, timed in-process.
// Usage: node bench/ours.mjs FILE [--reps 5] [--warmup 1] [--json OUT] [--pipeline all|p2]
//        node bench/ours.mjs --header-loop DIR      (P6: header-only reads of every file in DIR)
//        node bench/ours.mjs --write-header-set DIR (writes 1000 small frames for P6)
//        node bench/ours.mjs --write-folder20 DIR   (writes 20 frames for P5)
import { readFileSync, writeFileSync, readdirSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const core = await import(path.join(here, '../packages/core/dist/index.js'));
const coreNode = await import(path.join(here, '../packages/core/dist/node.js'));
const args = process.argv.slice(2);
const opt = (flag, dflt) => {
  const i = args.indexOf(flag);
  return i >= 0 ? args[i + 1] : dflt;
};

if (args[0] === '--header-loop') {
  const dir = args[1];
  const files = readdirSync(dir).filter((f) => f.endsWith('.fits')).sort().map((f) => path.join(dir, f));
  const t0 = performance.now();
  let cards = 0;
  for (const f of files) {
    const fits = await coreNode.readFitsHeaders(f);
    cards += fits.hdus[0].header.cards.length;
  }
  process.stdout.write(JSON.stringify({ files: files.length, cards, ms: performance.now() - t0 }) + '\n');
  process.exit(0);
}

if (args[0] === '--write-header-set' || args[0] === '--write-folder20') {
  const dir = args[1];
  mkdirSync(dir, { recursive: true });
  const header = args[0] === '--write-header-set';
  const count = header ? 1000 : 20;
  const [w, h] = header ? [1024, 1024] : [3008, 3008];
  for (let i = 0; i < count; i++) {
    const px = new Uint16Array(w * h);
    let s = (i + 1) * 2654435761 >>> 0;
    for (let k = 0; k < px.length; k++) {
      s ^= s << 13; s >>>= 0; s ^= s >>> 17; s ^= s << 5; s >>>= 0;
      px[k] = 1000 + (s & 63);
    }
    const cards = [
      { keyword: 'IMAGETYP', value: 'Light Frame' },
      { keyword: 'EXPTIME', value: 120, real: true, comment: '[s] exposure time' },
      { keyword: 'FILTER', value: 'L' },
      { keyword: 'DATE-OBS', value: new Date(Date.UTC(2026, 9, 1, 20) + i * 125000).toISOString().slice(0, 23) },
    ];
    const bytes = core.encodeFits([{ pixels: px, width: w, height: h, cards }]);
    const name = header ? `h_${String(i).padStart(4, '0')}.fits` : `light_${String(i + 1).padStart(3, '0')}.fits`;
    writeFileSync(path.join(dir, name), bytes);
  }
  process.exit(0);
}

const file = args[0];
const reps = Number(opt('--reps', 5));
const warmup = Number(opt('--warmup', 1));
const pipeline = opt('--pipeline', 'all');
const MESH = 64;

// The file is read straight into the pixel buffer by @subgauge/core/node (one copy; checksums not verified,
// as astropy's default open does not verify them either).
async function readHdu() {
  const fits = await coreNode.readFitsFile(file, { verifyChecksums: false });
  return fits.hdus[0];
}
async function readDecode() {
  return (await readHdu()).image;
}

/** 64-px box medians with partial edge boxes dropped, as the reference's step e; `median` is np.median(mesh). */
function mesh64(view) {
  const m = core.boxMedianMesh(view, MESH, { edges: 'drop' });
  return { rows: m.rows, columns: m.columns, median: core.median(m.medians) };
}

let memoryBytes;
let tDecodeBytes = NaN;
let tDecodeInPlace = NaN;
async function once() {
  const t = {};
  const res = {};
  let t0 = performance.now();
  if (pipeline === 'p3') {
    const hdu = await readHdu();
    core.measureLightFrame(file, hdu.image, hdu.header);
    t.p3 = performance.now() - t0;
    return { t, res };
  }
  if (pipeline === 'p2') {
    const img = await readDecode();
    const view = core.frameView(img);
    const st = core.frameStats(view, { clip: { sigma: 3, maxIterations: 5 } });
    const mesh = mesh64(view);
    t.p2 = performance.now() - t0;
    res.median = st.median;
    res.meshMedian = mesh.median;
    return { t, res };
  }
  // P1 as one fused path: bytes -> decode -> median + MAD-sigma
  {
    const img = await readDecode();
    const st = core.frameStats(core.frameView(img), { clip: false });
    t.p1 = performance.now() - t0;
    res.p1Median = st.median;
  }
  // P2 as one fused path
  t0 = performance.now();
  {
    const img = await readDecode();
    const view = core.frameView(img);
    const st = core.frameStats(view, { clip: { sigma: 3, maxIterations: 5 } });
    const mesh = mesh64(view);
    t.p2 = performance.now() - t0;
    res.median = st.median;
    res.madSigma = st.madSigma;
    res.sigclip = [st.clipped.mean, st.clipped.median, st.clipped.std];
    res.meshMedian = mesh.median;
    res.meshShape = [mesh.rows, mesh.columns];
  }
  // decode alone from bytes already in memory (issue: decoding a frame from its bytes vs astropy's read)
  {
    const bytes = memoryBytes ?? (memoryBytes = new Uint8Array(readFileSync(file)));
    const t = performance.now();
    const fits = core.parseFits(bytes, { verifyChecksums: false });
    tDecodeBytes = performance.now() - t;
    res.decodeBytesMedian = fits.hdus[0].image.width;
    // the same bytes handed over (a fresh copy, made before the clock starts): decoded where they lie
    const handed = new Uint8Array(bytes);
    const t2 = performance.now();
    const inPlace = core.parseFits(handed, { verifyChecksums: false, inPlace: true });
    tDecodeInPlace = performance.now() - t2;
    const a = fits.hdus[0].image.pixels;
    const b = inPlace.hdus[0].image.pixels;
    if (a.length !== b.length || a[0] !== b[0] || a[a.length - 1] !== b[b.length - 1] || a[a.length >> 1] !== b[b.length >> 1]) throw new Error('in-place decode differs');
  }
  // step by step, for the breakdown
  t0 = performance.now();
  const img = await readDecode();
  const view = core.frameView(img);
  let t1 = performance.now();
  t.read_decode = t1 - t0;
  res.stepMedian = core.median(view);
  let t2 = performance.now();
  t.median = t2 - t1;
  res.stepMadSigma = core.madSigma(view);
  t1 = performance.now();
  t.mad_sigma = t1 - t2;
  const c = core.sigmaClippedStats(view, { sigma: 3, maxIterations: 5 });
  t2 = performance.now();
  t.sigma_clip = t2 - t1;
  res.stepSigclip = [c.mean, c.median, c.std];
  mesh64(view);
  t1 = performance.now();
  t.mesh64 = t1 - t2;
  // P3: the full per-frame audit measurement (read, decode, mesh, stars and shapes, trail search)
  t0 = performance.now();
  const hdu = await readHdu();
  const audit = core.measureLightFrame(file, hdu.image, hdu.header);
  t.p3 = performance.now() - t0;
  res.p3Stars = audit.metrics.starCount;
  res.p3Trails = audit.metrics.trails.length;
  res.elementType = img.elementType;
  t.decode_bytes = tDecodeBytes;
  t.decode_in_place = tDecodeInPlace;
  return { t, res };
}

for (let i = 0; i < warmup; i++) await once();
const runs = [];
let last;
for (let i = 0; i < reps; i++) {
  last = await once();
  runs.push(last.t);
}
const med = (a) => {
  const s = [...a].sort((x, y) => x - y);
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
};
const timings = {};
for (const k of Object.keys(runs[0])) timings[k] = med(runs.map((r) => r[k]));
const out = { file, reps, warmup, node: process.version, timings, results: last.res };
if (opt('--json')) writeFileSync(opt('--json'), JSON.stringify(out, null, 1));
process.stdout.write(`# subgauge ${path.basename(file)}: ` + Object.entries(timings).map(([k, v]) => `${k} ${v.toFixed(1)} ms`).join(', ') + '\n');
