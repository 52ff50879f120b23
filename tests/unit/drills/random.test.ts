import { describe, expect, it } from 'vitest';
import { assertSeed, Draw, drawUntil, mulberry32, roundTo } from '../../../server/engine/drills/random';

describe('mulberry32', () => {
  it('repeats the same stream for the same seed and differs between seeds', () => {
    const a = mulberry32(12345);
    const b = mulberry32(12345);
    const c = mulberry32(12346);
    const first = Array.from({ length: 100 }, () => a());
    expect(Array.from({ length: 100 }, () => b())).toEqual(first);
    expect(Array.from({ length: 100 }, () => c())).not.toEqual(first);
  });

  it('stays in [0, 1) and is roughly uniform (common practice, no source: mean 1/2, variance 1/12)', () => {
    const next = mulberry32(2024);
    const n = 100_000;
    let sum = 0;
    let squares = 0;
    const deciles = new Array(10).fill(0);
    for (let i = 0; i < n; i++) {
      const x = next();
      expect(x >= 0 && x < 1).toBe(true);
      sum += x;
      squares += x * x;
      deciles[Math.floor(x * 10)]++;
    }
    const mean = sum / n;
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.005);
    expect(Math.abs(squares / n - mean * mean - 1 / 12)).toBeLessThan(0.002);
    for (const count of deciles) expect(Math.abs(count - n / 10)).toBeLessThan(0.05 * (n / 10));
  });
});

describe('draw helpers', () => {
  it('draws within bounds, at the reading resolution', () => {
    const draw = new Draw(mulberry32(9));
    for (let i = 0; i < 1000; i++) {
      const reading = draw.reading(25, 30.5, 0.01);
      expect(reading).toBeGreaterThanOrEqual(25);
      expect(reading).toBeLessThanOrEqual(30.5);
      expect(roundTo(reading, 0.01)).toBe(reading);
      const whole = draw.int(9, 12);
      expect([9, 10, 11, 12]).toContain(whole);
      const log = draw.logUniform(1e-14, 1e-10);
      expect(log >= 1e-14 && log < 1e-10).toBe(true);
    }
  });

  it('rounds to a resolution without binary noise', () => {
    // common practice, no source: the sums a crew writes are exact decimals
    expect(roundTo(0.1 + 0.2, 0.1)).toBe(0.3);
    expect(roundTo(512.3456, 0.001)).toBe(512.346);
    expect(roundTo(1234.5, 10)).toBe(1230);
    expect(roundTo(-0.125, 0.01)).toBe(-0.12);
  });

  it('accepts only storable seeds', () => {
    expect(assertSeed(0)).toBe(0);
    expect(assertSeed(4294967295)).toBe(4294967295);
    for (const bad of [-1, 0.5, 4294967296, Number.NaN, Number.POSITIVE_INFINITY]) expect(() => assertSeed(bad)).toThrow(RangeError);
  });

  it('re-draws from one stream until a draw is accepted, and gives up loudly', () => {
    const accepted = drawUntil(5, (draw) => {
      const x = draw.uniform(0, 1);
      return x > 0.9 ? x : undefined;
    });
    expect(accepted).toBeGreaterThan(0.9);
    expect(drawUntil(5, (draw) => (draw.uniform(0, 1) > 0.9 ? 1 : undefined))).toBe(1);
    expect(() => drawUntil(5, () => undefined, 10)).toThrow(/No acceptable scenario/);
  });
});
