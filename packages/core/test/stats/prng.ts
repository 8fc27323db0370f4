// Test-only seeded generator, implemented identically in scripts/reference/stats_goldens.py so both sides
// build the same arrays from a seed: Marsaglia's xorshift32 (J. Stat. Softw. 8(14), 2003, shifts 13/17/5).
// Every derived value uses only exact integer arithmetic and correctly rounded +, *, /, so Python floats and
// JS numbers agree bit for bit (no log/sin/cos, whose last bits differ between libms).
export class XorShift32 {
  private s: number;
  constructor(seed: number) {
    this.s = seed >>> 0 || 0x9e3779b9;
  }
  /** Next 32-bit unsigned integer. */
  nextUint32(): number {
    let x = this.s;
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    this.s = x;
    return x;
  }
  /** Uniform in [0, 1): k / 2^32. */
  uniform(): number {
    return this.nextUint32() / 4294967296;
  }
  /** Integer in [0, n). */
  below(n: number): number {
    return Math.floor(this.uniform() * n);
  }
  /**
   * Approximately standard normal: the Irwin-Hall sum of 12 uniforms minus 6 (mean 0, variance 1), summed as
   * integers so the result is exact.
   */
  normal(): number {
    let s = 0;
    for (let i = 0; i < 12; i++) s += this.nextUint32();
    return (s - 6 * 4294967296) / 4294967296;
  }
}
