/**
 * A small seeded random source, so that a simulated run is the same on every
 * machine for the same seed. xoshiro128** (Blackman & Vigna) seeded through
 * splitmix32; normal deviates by the Box–Muller transform.
 */
export interface RandomSource {
  /** Uniform on [0, 1). */
  uniform(): number;
  /** Standard normal deviate. */
  normal(): number;
}

export function seededRandom(seed: number): RandomSource {
  let s = (Math.trunc(seed) >>> 0) ^ 0x9e3779b9;
  const splitmix = (): number => {
    s = (s + 0x9e3779b9) >>> 0;
    let z = s;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
    return (z ^ (z >>> 16)) >>> 0;
  };
  let a = splitmix(), b = splitmix(), c = splitmix(), d = splitmix();
  const next = (): number => {
    const result = Math.imul(rotl(Math.imul(b, 5) >>> 0, 7), 9) >>> 0;
    const t = (b << 9) >>> 0;
    c ^= a; d ^= b; b ^= c; a ^= d;
    c ^= t;
    d = rotl(d, 11);
    return result;
  };
  let spare: number | null = null;
  return {
    uniform: () => next() / 4294967296,
    normal: () => {
      if (spare !== null) { const v = spare; spare = null; return v; }
      let u = 0;
      while (u === 0) u = next() / 4294967296;
      const v = next() / 4294967296;
      const r = Math.sqrt(-2 * Math.log(u));
      spare = r * Math.sin(2 * Math.PI * v);
      return r * Math.cos(2 * Math.PI * v);
    },
  };
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
