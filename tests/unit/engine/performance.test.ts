/**
 * Engine throughput for `calculate('stack-flow', ...)`, validation included. QUALITY.md asks for
 * 50,000 calls/s on one core; that is measured by `npm run bench`, not asserted here (shared
 * machines drift). This test logs the rate and only fails on a gross regression.
 */
import { describe, expect, it } from 'vitest';
import { calculate } from '../../../server/engine';
import { examples } from './examples';

describe('stack-flow throughput (logged, not a timed test)', () => {
  it('logs calls per second for a 24-point traverse', () => {
    const inputs = {
      ...examples['stack-flow'],
      deltaP_inH2O: [...examples['stack-flow'].deltaP_inH2O, ...examples['stack-flow'].deltaP_inH2O],
    };
    for (let i = 0; i < 5000; i++) calculate('stack-flow', inputs);
    let best = 0;
    for (let round = 0; round < 5; round++) {
      const calls = 20000;
      const start = performance.now();
      for (let i = 0; i < calls; i++) calculate('stack-flow', inputs);
      best = Math.max(best, calls / ((performance.now() - start) / 1000));
    }
    console.log(`calculate('stack-flow') with validation: ${Math.round(best).toLocaleString('en-US')} calls/s (target ≥ 50,000)`);
    // Generous floor, far below the target, so a loaded CI machine never fails it.
    expect(best).toBeGreaterThan(5000);
  });
});
