/** Every template of these areas over 1,000 seeds (the checks are in template-checks.ts). */
import { describe, expect, it } from 'vitest';
import { drillTemplates } from '../../../server/engine/drills';
import { describeTemplates } from './template-checks';

describeTemplates(['flow-moisture', 'particulate']);

describe('generation', () => {
  it('refuses seeds that cannot be stored', () => {
    const [template] = drillTemplates;
    for (const bad of [-1, 1.5, 2 ** 32, Number.NaN]) expect(() => template.generate(bad)).toThrow(RangeError);
  });
});
