/**
 * Seeded pseudo-random numbers: xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom
 * number generators", ACM TOMS 47 (2021)), seeded through splitmix32. Small, fast, and identical
 * on every JavaScript engine, so a seed reproduces a run bit for bit in the browser and in Node.
 */

export class SeededRandom {
  private s0 = 0;
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;
  /** Second Box–Muller deviate, kept as part of the generator state. */
  private spareNormal = 0;
  private hasSpare = false;

  constructor(seed: number, stream = 0) {
    let x = (seed ^ Math.imul(stream + 1, 0x9e3779b9)) >>> 0;
    const next = (): number => {
      // splitmix32
      x = (x + 0x9e3779b9) >>> 0;
      let z = x;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next 32-bit unsigned integer. */
  nextUint32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  uniform(): number {
    const hi = this.nextUint32() >>> 5; // 27 bits
    const lo = this.nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Standard normal deviate (Box–Muller, both values used). */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spareNormal;
    }
    let u = this.uniform();
    while (u === 0) u = this.uniform(); // log(0) would be infinite
    const r = Math.sqrt(-2 * Math.log(u));
    const theta = 2 * Math.PI * this.uniform();
    this.spareNormal = r * Math.sin(theta);
    this.hasSpare = true;
    return r * Math.cos(theta);
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
