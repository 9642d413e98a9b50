/**
 * Deterministic pseudo-random noise: the same seed gives the same sequence on every machine (32-bit integer
 * arithmetic only, no platform generator).
 */

/** A uniform generator on [0, 1) from a 32-bit seed (the "mulberry32" mixing function, common practice). */
export function createUniform(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 15), z | 1);
    z ^= z + Math.imul(z ^ (z >>> 7), z | 61);
    return ((z ^ (z >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal samples (Box–Muller transform) from a seeded uniform generator. */
export function createGaussian(seed: number): () => number {
  const uniform = createUniform(seed);
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const value = spare;
      spare = null;
      return value;
    }
    // 1 − u keeps the logarithm's argument in (0, 1].
    const radius = Math.sqrt(-2 * Math.log(1 - uniform()));
    const angle = 2 * Math.PI * uniform();
    spare = radius * Math.sin(angle);
    return radius * Math.cos(angle);
  };
}
