import { describe, expect, it } from 'vitest';
import { POISSON_INVERSION_LIMIT, Rng, mixSeed } from '../../src/sim/rng.js';
import { erf, logFactorial, normalCdf, normalQuantile } from '../../src/sim/special.js';

// Tolerances: statistical checks use |estimate - truth| < 5 standard errors (two-sided p ≈ 6e-7 for a
// correct sampler), with the standard errors stated beside each check.
const Z = 5;

function moments(values: Float64Array): { mean: number; variance: number; m4: number } {
  let s = 0;
  for (const v of values) s += v;
  const mean = s / values.length;
  let s2 = 0;
  let s4 = 0;
  for (const v of values) {
    const d = v - mean;
    s2 += d * d;
    s4 += d * d * d * d;
  }
  return { mean, variance: s2 / (values.length - 1), m4: s4 / values.length };
}

// Wilson-Hilferty approximation of the chi-square quantile (Johnson, Kotz & Balakrishnan; from memory).
function chiSquareQuantile(df: number, z: number): number {
  const a = 2 / (9 * df);
  return df * (1 - a + z * Math.sqrt(a)) ** 3;
}

describe('Rng', () => {
  it('nextUint32() reproduces xoshiro128** from state (1, 2, 3, 4)', () => {
    // Reference: a direct Python transcription of prng.di.unimi.it/xoshiro128starstar.c run with
    // /usr/bin/python3 (result = rotl(s1*5, 7)*9; t = s1 << 9; ...; s3 = rotl(s3, 11)).
    const expected = [11520, 0, 5927040, 70819200, 2031721883, 1637235492, 1287239034, 3734860849];
    const rng = Rng.fromState(1, 2, 3, 4);
    expect(expected.map(() => rng.nextUint32())).toEqual(expected);
  });

  it('fillUniform(out) continues the same stream as uniform()', () => {
    const a = new Rng(7);
    const b = new Rng(7);
    const out = new Float64Array(5);
    a.fillUniform(out);
    expect(Array.from(out)).toEqual([b.uniform(), b.uniform(), b.uniform(), b.uniform(), b.uniform()]);
  });

  it('new Rng(seed) is deterministic per seed and differs across seeds', () => {
    const draw = (seed: number) => {
      const r = new Rng(seed);
      return Array.from({ length: 6 }, () => r.nextUint32());
    };
    expect(draw(12345)).toEqual(draw(12345));
    expect(draw(12345)).not.toEqual(draw(12346));
    expect(draw(0)).not.toEqual(draw(2 ** 32));
    expect(mixSeed(1, 2)).not.toBe(mixSeed(2, 1));
  });

  it('uniform() has mean 1/2 and variance 1/12 and stays inside (0, 1)', () => {
    const n = 1_000_000;
    const v = new Float64Array(n);
    new Rng(1).fillUniform(v);
    const m = moments(v);
    let min = 1;
    let max = 0;
    for (const x of v) {
      if (x < min) min = x;
      if (x > max) max = x;
    }
    expect(min).toBeGreaterThan(0);
    expect(max).toBeLessThan(1);
    expect(Math.abs(m.mean - 0.5)).toBeLessThan(Z * Math.sqrt(1 / 12 / n));
    // Var(s²) for U(0,1): (μ4 - σ⁴)/n with μ4 = 1/80.
    expect(Math.abs(m.variance - 1 / 12)).toBeLessThan(Z * Math.sqrt((1 / 80 - 1 / 144) / n));
  });

  it('addNormal(buf, 1) and normal() give mean 0, variance 1, fourth moment 3', () => {
    const n = 1_000_000;
    const bulk = new Float64Array(n);
    new Rng(2).addNormal(bulk, 1);
    const scalar = new Float64Array(200_000);
    const r = new Rng(3);
    for (let i = 0; i < scalar.length; i++) scalar[i] = r.normal();
    for (const v of [bulk, scalar]) {
      const m = moments(v);
      const N = v.length;
      expect(Math.abs(m.mean)).toBeLessThan(Z / Math.sqrt(N));
      expect(Math.abs(m.variance - 1)).toBeLessThan(Z * Math.sqrt(2 / N)); // Var(s²) = 2σ⁴/(n-1)
      expect(Math.abs(m.m4 - 3)).toBeLessThan(Z * Math.sqrt(96 / N)); // Var of the 4th moment: (μ8 - μ4²)/n = 96/n
    }
  });

  it('addNormal(buf, sigma) adds to the existing values with the given sigma', () => {
    const n = 400_000;
    const v = new Float64Array(n).fill(100);
    new Rng(4).addNormal(v, 2.5);
    const m = moments(v);
    expect(Math.abs(m.mean - 100)).toBeLessThan((Z * 2.5) / Math.sqrt(n));
    expect(Math.abs(m.variance - 6.25)).toBeLessThan(Z * 6.25 * Math.sqrt(2 / n));
  });

  it.each([0.05, 0.7, 3, 9.99, 10, 10.01, 37.5, 250, 4321.5, 30000])(
    'poissonInPlace(means) with mean %s has the Poisson mean and variance',
    (mu) => {
      const n = 200_000;
      const v = new Float64Array(n).fill(mu);
      new Rng(mixSeed(5, Math.round(mu * 100))).poissonInPlace(v);
      for (let i = 0; i < 1000; i++) expect(Number.isInteger(v[i])).toBe(true);
      const m = moments(v);
      expect(Math.abs(m.mean - mu)).toBeLessThan(Z * Math.sqrt(mu / n));
      // Poisson central 4th moment 3μ² + μ, so Var(s²) ≈ (2μ² + μ)/n.
      expect(Math.abs(m.variance - mu)).toBeLessThan(Z * Math.sqrt((2 * mu * mu + mu) / n));
    },
  );

  it.each([3.3, POISSON_INVERSION_LIMIT, 42])('poissonInPlace(means) with mean %s follows the Poisson pmf (chi-square)', (mu) => {
    const n = 300_000;
    const v = new Float64Array(n).fill(mu);
    new Rng(mixSeed(6, mu * 10)).poissonInPlace(v);
    const counts = new Map<number, number>();
    for (const k of v) counts.set(k, (counts.get(k) ?? 0) + 1);
    // Pool cells so every expected count is at least 20; tails go to the end cells.
    const pmf = (k: number) => Math.exp(k * Math.log(mu) - mu - logFactorial(k));
    let chi2 = 0;
    let cells = 0;
    let k = 0;
    let cdf = 0;
    let obsAcc = 0;
    let expAcc = 0;
    while (cdf < 1 - 1e-12 && k < 1000) {
      const p = pmf(k);
      cdf += p;
      expAcc += p * n;
      obsAcc += counts.get(k) ?? 0;
      if (expAcc >= 20 && (1 - cdf) * n >= 20) {
        chi2 += (obsAcc - expAcc) ** 2 / expAcc;
        cells++;
        expAcc = 0;
        obsAcc = 0;
      }
      k++;
    }
    let rest = 0;
    for (const [kk, c] of counts) if (kk >= k) rest += c;
    obsAcc += rest;
    expAcc += (1 - cdf) * n;
    chi2 += (obsAcc - expAcc) ** 2 / expAcc;
    cells++;
    // p = 1e-4 upper quantile (z = 3.719) of chi-square with cells - 1 degrees of freedom.
    expect(chi2).toBeLessThan(chiSquareQuantile(cells - 1, 3.719));
    expect(cells).toBeGreaterThan(8);
  });

  it('poissonInPlace(means) maps non-positive and NaN means to 0 and handles mixed means', () => {
    const v = new Float64Array([0, -3, Number.NaN, 5, 5000]);
    new Rng(8).poissonInPlace(v);
    expect(v[0]).toBe(0);
    expect(v[1]).toBe(0);
    expect(v[2]).toBe(0);
    expect(v[4]).toBeGreaterThan(4500);
    expect(v[4]).toBeLessThan(5500);
  });

  it('poisson(mean) gives the same stream as poissonInPlace on the same seed', () => {
    const a = new Rng(9);
    const b = new Rng(9);
    const buf = new Float64Array([2, 20, 2000]);
    b.poissonInPlace(buf);
    expect([a.poisson(2), a.poisson(20), a.poisson(2000)]).toEqual(Array.from(buf));
  });
});

describe('special functions', () => {
  it('erf(x) matches scipy.special.erf', () => {
    // Reference values: scipy 1.10.1 scipy.special.erf (via /usr/bin/python3), printed with repr.
    const cases: [number, number][] = [
      [0.1, 0.1124629160182849],
      [0.5, 0.5204998778130465],
      [1, 0.8427007929497148],
      [2.5, 0.999593047982555],
      [2.999, 0.9999777698314002],
      [3.5, 0.9999992569016276],
      [-1.7, -0.9837904585907745],
    ];
    for (const [x, y] of cases) expect(Math.abs(erf(x) - y)).toBeLessThan(2e-15);
  });

  it('normalCdf(z) keeps relative accuracy in the far lower tail and normalQuantile inverts it', () => {
    // scipy.stats.norm.cdf(-8) = 6.22096057427174e-16 (scipy 1.10.1).
    expect(Math.abs(normalCdf(-8) / 6.22096057427174e-16 - 1)).toBeLessThan(1e-12);
    for (const p of [1e-6, 0.01, 0.3, 0.5, 0.9, 0.999]) expect(Math.abs(normalCdf(normalQuantile(p)) - p)).toBeLessThan(1e-13);
  });

  it('logFactorial(k) agrees with sums of logs across the table/Stirling boundary', () => {
    let acc = 0;
    for (let k = 1; k <= 400; k++) {
      acc += Math.log(k);
      expect(Math.abs(logFactorial(k) - acc)).toBeLessThanOrEqual(1e-12 * acc + 1e-15);
    }
  });
});
