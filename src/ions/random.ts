/**
 * Seeded pseudo-random numbers: xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom
 * number generators", ACM TOMS 47 (2021)), seeded through splitmix32. Small, fast, and identical
 * on every JavaScript engine, so a seed reproduces a run bit for bit in the browser and in Node.
 */

export class SeededRandom {
  /** xoshiro128** state s0..s3 as 32-bit words (the bit patterns are what matter, not the sign). */
  private readonly state = new Int32Array(4);
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
    const s = this.state;
    s[0] = next();
    s[1] = next();
    s[2] = next();
    s[3] = next();
    if ((s[0] | s[1] | s[2] | s[3]) === 0) s[0] = 1;
  }

  /** Next 32-bit unsigned integer. */
  nextUint32(): number {
    return step(this.state) >>> 0;
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  uniform(): number {
    return uniformOf(this.state);
  }

  /** Standard normal deviate (Box–Muller, both values used). */
  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spareNormal;
    }
    const s = this.state;
    let u = uniformOf(s);
    while (u === 0) u = uniformOf(s); // log(0) would be infinite
    const r = Math.sqrt(-2 * Math.log(u));
    const theta = 2 * Math.PI * uniformOf(s);
    this.spareNormal = r * Math.sin(theta);
    this.hasSpare = true;
    return r * Math.cos(theta);
  }

  /**
   * out[i] = offset + scale·uniform() for i in [from, to): the same draws, in the same order, as
   * calling uniform() per element, in one loop without a method call per draw.
   */
  fillUniform(out: Float64Array, from: number, to: number, offset: number, scale: number): void {
    const s = this.state;
    for (let i = from; i < to; i++) out[i] = offset + scale * uniformOf(s);
  }

  /**
   * out[i] = g(max(x, minimum)) with x = mean + sd·normal(), redrawn while x < minimum (at most
   * maxRedraws times), for i in [from, to); g is the identity, or the speed sqrt(2x/mass) when
   * `speedOfEnergyMass_kg` is given. Exactly the draws, in the same order, of calling normal() per
   * draw (the cached second deviate included); only the loop is batched, with both Box–Muller
   * deviates of a pair used in the same pass.
   */
  fillNormal(out: Float64Array, from: number, to: number, mean: number, sd: number, minimum: number, maxRedraws: number, speedOfEnergyMass_kg = 0): void {
    const s = this.state;
    const toSpeed = speedOfEnergyMass_kg > 0;
    let spare = this.spareNormal;
    let hasSpare = this.hasSpare;
    let i = from;
    if (minimum === -Infinity && !toSpeed) {
      // Nothing is redrawn: one Box–Muller pair gives two consecutive elements.
      if (hasSpare && i < to) {
        out[i++] = mean + sd * spare;
        hasSpare = false;
      }
      for (; i + 1 < to; i += 2) {
        let u = uniformOf(s);
        while (u === 0) u = uniformOf(s);
        const r = Math.sqrt(-2 * Math.log(u));
        const theta = 2 * Math.PI * uniformOf(s);
        out[i] = mean + sd * (r * Math.cos(theta));
        out[i + 1] = mean + sd * (r * Math.sin(theta));
      }
      // An odd last element falls through to the general loop, which keeps its pair's spare.
    }
    for (; i < to; i++) {
      let x = 0;
      for (let tries = -1; tries < maxRedraws; tries++) {
        let n = spare;
        if (hasSpare) hasSpare = false;
        else {
          let u = uniformOf(s);
          while (u === 0) u = uniformOf(s);
          const r = Math.sqrt(-2 * Math.log(u));
          const theta = 2 * Math.PI * uniformOf(s);
          spare = r * Math.sin(theta);
          hasSpare = true;
          n = r * Math.cos(theta);
        }
        x = mean + sd * n;
        if (!(x < minimum)) break;
      }
      const kept = Math.max(x, minimum);
      out[i] = toSpeed ? Math.sqrt((2 * kept) / speedOfEnergyMass_kg) : kept;
    }
    this.spareNormal = spare;
    this.hasSpare = hasSpare;
  }
}

/** One xoshiro128** step on the state words; returns the output word (signed; >>> 0 for unsigned). */
function step(s: Int32Array): number {
  const s0 = s[0];
  const s1 = s[1];
  const result = Math.imul(rotl(Math.imul(s1, 5), 7), 9);
  const t = s1 << 9;
  const s2 = s[2] ^ s0;
  const s3 = s[3] ^ s1;
  s[1] = s1 ^ s2;
  s[0] = s0 ^ s3;
  s[2] = s2 ^ t;
  s[3] = rotl(s3, 11);
  return result;
}

/** Uniform double in [0, 1): 27 high bits of one output and 26 of the next (53 bits). */
function uniformOf(s: Int32Array): number {
  const hi = step(s) >>> 5;
  const lo = step(s) >>> 6;
  return (hi * 67108864 + lo) / 9007199254740992;
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
