/**
 * ENGINE.md: "The client never receives an expected answer before the attempt is submitted."
 * The attempt view is serialised as the API would send it and searched for every expected value.
 */
import { describe, expect, it } from 'vitest';
import { drillTemplates, publicAttemptView, type DrillTemplate } from '../../../server/engine/drills';

const SEEDS = Array.from({ length: 300 }, (_, i) => Math.imul(i + 1, 2246822519) >>> 0);

/**
 * The ways a value could be written into the view: full precision, and rounded to 5–8 figures in
 * plain and exponential form. Four figures and fewer are not searched: an answer can legitimately
 * agree with a recorded value to four figures (Ps with Pbar when the static pressure is small). A
 * value that is its own 4-figure rounding (a relocated traverse point, a BAF of 1) may coincide
 * with a recorded value by nature and is skipped.
 */
function spellings(value: number): string[] {
  if (Number(value.toPrecision(4)) === value) return [];
  const forms = new Set<string>([String(value)]);
  for (let figures = 5; figures <= 8; figures++) {
    forms.add(value.toPrecision(figures));
    forms.add(value.toExponential(figures - 1));
  }
  return [...forms];
}

/** The text holds `needle` as a whole number, not inside a longer one. */
function containsNumber(text: string, needle: string): boolean {
  const escaped = needle.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  return new RegExp(`(^|[^0-9.])${escaped}($|[^0-9])`).test(text);
}

describe.each(drillTemplates.map((t) => [t.id, t] as const))('%s attempt view', (_id, template: DrillTemplate) => {
  it('carries the sheet and the answer boxes and never an expected value', () => {
    const leaks: string[] = [];
    for (const seed of SEEDS) {
      const scenario = template.generate(seed);
      const view = publicAttemptView(template, scenario);
      const json = JSON.stringify(view);
      const expected = template.solve(scenario).expected;
      for (const [key, value] of Object.entries(expected)) {
        for (const form of spellings(value)) {
          if (containsNumber(json, form)) leaks.push(`seed ${seed}: ${key} = ${value} appears as ${form}`);
        }
      }
      // the full server-side scenario (data included) holds no expected value either
      const full = JSON.stringify(scenario);
      for (const [key, value] of Object.entries(expected)) {
        if (spellings(value).some((form) => containsNumber(full, form))) leaks.push(`seed ${seed}: ${key} in the scenario`);
      }
    }
    expect(leaks.slice(0, 10)).toEqual([]);
  }, 60_000);

  it('holds exactly the sheet and the field keys, labels and units', () => {
    const scenario = template.generate(11);
    const view = publicAttemptView(template, scenario);
    expect(Object.keys(view).sort()).toEqual(['fields', 'scenario']);
    expect(Object.keys(view.scenario).sort()).toEqual(['given', 'intro', 'tables', 'templateId', 'title']);
    expect(view.fields).toEqual(template.fields.map((f) => ({ key: f.key, label: f.label, unit: f.unit })));
    expect(view.scenario.given).toEqual(scenario.given);
    expect(view.scenario.tables).toEqual(scenario.tables);
    const json = JSON.stringify(view);
    // no server-side detail: tolerances, dependencies, sources, the data object, the seed
    for (const word of ['"data"', '"seed"', 'tolerance', 'dependsOn', 'expected', 'recompute']) expect(json).not.toContain(word);
  });

  it('refuses a scenario of another drill', () => {
    const other = drillTemplates.find((t) => t.id !== template.id)!;
    expect(() => publicAttemptView(template, other.generate(1))).toThrow();
  });
});

describe('leak search', () => {
  it('finds a value that was leaked on purpose', () => {
    // the search itself must work: a view with an answer pasted into the intro is caught
    const template = drillTemplates.find((t) => t.id === 'whole-run-reduction')!;
    const scenario = template.generate(3);
    const velocity = template.solve(scenario).expected.velocity_fps;
    const leaky = { ...scenario, intro: `${scenario.intro} (velocity ${velocity.toPrecision(5)} ft/s)` };
    const json = JSON.stringify(publicAttemptView(template, leaky));
    expect(spellings(velocity).some((form) => containsNumber(json, form))).toBe(true);
  });
});
