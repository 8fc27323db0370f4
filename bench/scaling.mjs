// Control for P5: how well this machine runs two threads at once, with no program of ours in the way.
// `node bench/scaling.mjs <threads> <unitsPerThread>` runs the same fixed CPU work (a 64 Ki-bin histogram and a
// square-root sum over 4 Mi 16-bit values, per unit) in each thread and prints the wall time in ms. One thread doing
// two units against two threads doing one each is the speed-up a perfectly parallel job could get here.
import { Worker, isMainThread, parentPort, workerData } from 'node:worker_threads';
import { fileURLToPath } from 'node:url';

function work(units) {
  const n = 1 << 22;
  const values = new Uint16Array(n);
  let s = 12345;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1103515245) + 12345) >>> 0;
    values[i] = s >>> 16;
  }
  let acc = 0;
  for (let u = 0; u < units; u++) {
    for (let r = 0; r < 6; r++) {
      const counts = new Int32Array(65536);
      for (let i = 0; i < n; i++) counts[values[i]]++;
      for (let i = 0; i < n; i++) acc += Math.sqrt(values[i]);
      acc += counts[r];
    }
  }
  return acc;
}

if (isMainThread) {
  const threads = Number(process.argv[2] ?? 1);
  const units = Number(process.argv[3] ?? 1);
  const file = fileURLToPath(import.meta.url);
  const t0 = performance.now();
  await Promise.all(
    Array.from({ length: threads }, () => new Promise((resolve, reject) => {
      const w = new Worker(file, { workerData: { units } });
      w.once('message', resolve);
      w.once('error', reject);
    })),
  );
  process.stdout.write(`${(performance.now() - t0).toFixed(1)}\n`);
} else {
  parentPort.postMessage(work(workerData.units));
}
