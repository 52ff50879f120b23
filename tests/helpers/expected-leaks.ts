/**
 * Searches serialised responses for expected answers (ENGINE.md: the client never receives an
 * expected answer before submission). The same spellings as the drills' public-view unit test:
 * full precision, and 5 to 8 significant figures in plain and exponential form. Four figures and
 * fewer are not searched (an answer can agree with a recorded value to four figures), and a value
 * that is its own 4-figure rounding is skipped for the same reason.
 */
import { getDrillTemplate } from '../../server/engine/drills';

export function spellings(value: number): string[] {
  if (Number(value.toPrecision(4)) === value) return [];
  const forms = new Set<string>([String(value)]);
  for (let figures = 5; figures <= 8; figures++) {
    forms.add(value.toPrecision(figures));
    forms.add(value.toExponential(figures - 1));
  }
  return [...forms];
}

/** The text holds `needle` as a whole number, not inside a longer one. */
export function containsNumber(text: string, needle: string): boolean {
  const escaped = needle.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  return new RegExp(`(^|[^0-9.])${escaped}($|[^0-9])`).test(text);
}

/** Every expected value of the drill on this seed, by field key. */
export function expectedFor(drillId: string, seed: number): Record<string, number> {
  const template = getDrillTemplate(drillId);
  if (!template) throw new Error(`no drill ${drillId}`);
  return template.solve(template.generate(seed)).expected;
}

/** Where any expected value appears in any of the texts: `[]` when nothing leaked. */
export function findLeaks(texts: readonly string[], expected: Record<string, number>, label = ''): string[] {
  const leaks: string[] = [];
  for (const [key, value] of Object.entries(expected)) {
    for (const form of spellings(value)) {
      texts.forEach((text, i) => {
        if (containsNumber(text, form)) leaks.push(`${label}${key} = ${value} appears as ${form} in response ${i + 1}`);
      });
    }
  }
  return leaks;
}
