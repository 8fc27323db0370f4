/**
 * The 10 000 uniform random numbers of the tiled image compression convention's subtractive
 * dithering: Park-Miller "minimal standard" generator, a = 16807, m = 2^31 - 1, seed 1, value = seed / m
 * as float32 (REFERENCE A.8.4; cfitsio `fits_init_randoms`). cfitsio checks that the last seed is
 * 1043618065; `lastSeed` lets callers do the same.
 *
 * @returns the values and the final seed.
 * @example tileDitherRandoms().values[1] // 0.1315378 (float32)
 */
export function tileDitherRandoms(): { values: Float32Array; lastSeed: number } {
  const a = 16807;
  const m = 2147483647;
  const values = new Float32Array(10000);
  let seed = 1;
  for (let i = 0; i < values.length; i++) {
    // a * seed < 2^46: exact in float64, as in cfitsio's double arithmetic.
    const t = a * seed;
    seed = t - m * Math.floor(t / m);
    values[i] = seed / m;
  }
  return { values, lastSeed: seed };
}
