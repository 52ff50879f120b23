/**
 * QUALITY.md: hostile input gives a result or a 400, never a crash. Any numbers a trainee may type,
 * however absurd (zero velocity, negative moisture, 1e300), grade to a verdict on every drill;
 * only unreadable text is refused, and then as an AnswerFormatError.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { drillTemplates } from '../../../server/engine/drills';
import { AnswerFormatError, gradeSubmission } from '../../../server/engine/grading/grade';

const verdicts = new Set(['correct', 'carried-forward', 'incorrect', 'blank']);

const typedNumber = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e300, max: 1e300 }).map(String),
  fc.constantFrom('0', '-0', '1', '-1', '1e-300', '0.999999', '1.0', '100', '1e12', ''),
);

describe.each(drillTemplates.map((t) => [t.id, t] as const))('%s', (_id, template) => {
  it('grades any typed numbers to a verdict and a score from 0 to 100', () => {
    const scenario = template.generate(77);
    const answerSets = fc.record(Object.fromEntries(template.fields.map((f) => [f.key, typedNumber])), { requiredKeys: [] });
    fc.assert(
      fc.property(answerSets, (answers) => {
        const result = gradeSubmission(template, scenario, answers as Record<string, string>);
        expect(result.score).toBeGreaterThanOrEqual(0);
        expect(result.score).toBeLessThanOrEqual(100);
        for (const field of result.fields) {
          expect(verdicts.has(field.verdict)).toBe(true);
          expect(Number.isFinite(field.expected)).toBe(true);
          if (field.recomputedExpected !== undefined) expect(Number.isFinite(field.recomputedExpected)).toBe(true);
        }
      }),
      { numRuns: 40 },
    );
  });

  it('refuses unreadable answers and non-object submissions as format errors', () => {
    const scenario = template.generate(78);
    const [first] = template.fields;
    expect(() => gradeSubmission(template, scenario, { [first.key]: '12 34' })).toThrow(AnswerFormatError);
    for (const bad of [null, 'answers', ['1']]) {
      expect(() => gradeSubmission(template, scenario, bad as unknown as Record<string, string>)).toThrow(AnswerFormatError);
    }
  });
});
