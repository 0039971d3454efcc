/**
 * The engine's one random generator: xoshiro128** (Blackman & Vigna, "Scrambled linear
 * pseudorandom number generators", 2018) seeded through splitmix32. Only 32-bit integer
 * operations (Math.imul, shifts, >>> 0) are used, so the sequence is bit-identical on every
 * platform and JavaScript engine.
 */
export class Xoshiro128StarStar {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;

  /** `seed` may be any finite number; its integer part (up to 2^53) selects the stream. */
  constructor(seed: number) {
    const integerSeed = Math.trunc(Number.isFinite(seed) ? seed : 0);
    const low = integerSeed >>> 0;
    const high = Math.floor(Math.abs(integerSeed) / 4294967296) >>> 0;
    let mix = splitmix32Next(low ^ Math.imul(high, 0x85ebca6b));
    this.s0 = mix;
    mix = splitmix32Next(mix ^ high);
    this.s1 = mix;
    mix = splitmix32Next(mix);
    this.s2 = mix;
    mix = splitmix32Next(mix);
    this.s3 = mix;
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1; // the all-zero state is a fixed point
  }

  /** Next output as an unsigned 32-bit integer. */
  nextUint32(): number {
    const result = Math.imul(rotateLeft(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const shifted = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= shifted;
    this.s3 = rotateLeft(this.s3, 11);
    return result;
  }

  /** Uniform double in [0, 1) with 53 random bits (exact integer arithmetic, no rounding). */
  nextFloat(): number {
    const high27 = this.nextUint32() >>> 5;
    const low26 = this.nextUint32() >>> 6;
    return (high27 * 67108864 + low26) / 9007199254740992;
  }

  /** Uniform integer in [0, bound) for bound ≤ 2^32, without modulo bias (rejection). */
  nextBelow(bound: number): number {
    const limit = 4294967296 - (4294967296 % bound);
    for (;;) {
      const value = this.nextUint32();
      if (value < limit) return value % bound;
    }
  }
}

function rotateLeft(value: number, bits: number): number {
  return (value << bits) | (value >>> (32 - bits));
}

/** One step of splitmix32 used as a seed scrambler: returns a well-mixed 32-bit value. */
export function splitmix32Next(state: number): number {
  let z = (state + 0x9e3779b9) | 0;
  z = Math.imul(z ^ (z >>> 16), 0x21f0aaad);
  z = Math.imul(z ^ (z >>> 15), 0x735a2d97);
  return (z ^ (z >>> 15)) >>> 0;
}
