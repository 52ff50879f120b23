/**
 * A small seeded random source for scenario generators. The seed is stored with the attempt, so
 * the same seed must always give the same sheet, on every machine and Node version: the
 * generator is mulberry32 (a well-known 32-bit generator by Tommy Ettinger, public domain), which
 * uses only 32-bit integer arithmetic.
 */
export type Rng = () => number;

export function mulberry32(seed: number): Rng {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A seed must be a whole number from 0 to 2^32 - 1 (it is stored as such with the attempt). */
export function assertSeed(seed: number): number {
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) {
    throw new RangeError(`A drill seed must be a whole number from 0 to 4294967295, not ${seed}.`);
  }
  return seed;
}

/** Convenience draws over one random stream. */
export class Draw {
  constructor(private readonly next: Rng) {}

  /** Uniform on [min, max). */
  uniform(min: number, max: number): number {
    return min + (max - min) * this.next();
  }

  /** Log-uniform on [min, max): equal chance per decade, for quantities spanning decades. */
  logUniform(min: number, max: number): number {
    return Math.exp(this.uniform(Math.log(min), Math.log(max)));
  }

  /** Whole number from min to max inclusive. */
  int(min: number, max: number): number {
    return min + Math.floor(this.next() * (max - min + 1));
  }

  pick<T>(items: readonly T[]): T {
    return items[Math.floor(this.next() * items.length)];
  }

  chance(probability: number): boolean {
    return this.next() < probability;
  }

  /** Uniform draw rounded to a recording resolution, e.g. step 0.01 for in. Hg. */
  reading(min: number, max: number, step: number): number {
    return roundTo(this.uniform(min, max), step);
  }
}

/**
 * Rounds to a multiple of `step` and cleans the binary noise, so that 0.1 + 0.2 style values are
 * stored and shown exactly as a crew would record them.
 */
export function roundTo(value: number, step: number): number {
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  return Number((Math.round(value / step) * step).toFixed(decimals));
}

export function mean(values: readonly number[]): number {
  return values.reduce((sum, v) => sum + v, 0) / values.length;
}

/**
 * Draws a scenario, re-drawing from the same stream until `accept` passes, so a seed still maps to
 * exactly one sheet. Gives up loudly rather than loop forever.
 */
export function drawUntil<T>(seed: number, attempt: (draw: Draw) => T | undefined, maxAttempts = 500): T {
  const draw = new Draw(mulberry32(assertSeed(seed)));
  for (let i = 0; i < maxAttempts; i++) {
    const result = attempt(draw);
    if (result !== undefined) return result;
  }
  throw new Error(`No acceptable scenario after ${maxAttempts} draws for seed ${seed}.`);
}
