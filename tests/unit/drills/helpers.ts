/** Shared helpers for the drill tests: reading a sheet, typing answers as a trainee would. */
import type { DrillScenario, DrillTemplate } from '../../../server/engine/drills';

/** Every number shown on the sheet under this key: a given value or a table column. */
export function sheetNumbers(scenario: DrillScenario, key: string): number[] {
  const values: number[] = [];
  for (const g of scenario.given) if (g.key === key && typeof g.value === 'number') values.push(g.value);
  for (const t of scenario.tables) {
    const column = t.columns.findIndex((c) => c.key === key);
    if (column >= 0) for (const row of t.rows) if (typeof row[column] === 'number') values.push(row[column] as number);
  }
  return values;
}

/** Every number anywhere on the sheet. */
export function allSheetNumbers(scenario: DrillScenario): number[] {
  return [
    ...scenario.given.flatMap((g) => (typeof g.value === 'number' ? [g.value] : [])),
    ...scenario.tables.flatMap((t) => t.rows.flatMap((row) => row.filter((cell): cell is number => typeof cell === 'number'))),
  ];
}

/** Every number in a value, with its path. */
export function numericLeaves(value: unknown, path = ''): { path: string; value: number }[] {
  if (typeof value === 'number') return [{ path, value }];
  if (Array.isArray(value)) return value.flatMap((v, i) => numericLeaves(v, `${path}[${i}]`));
  if (value !== null && typeof value === 'object') {
    return Object.entries(value).flatMap(([k, v]) => numericLeaves(v, path ? `${path}.${k}` : k));
  }
  return [];
}

/** The exact answers typed with four significant figures, as a careful trainee would. */
export function typedAnswers(expected: Record<string, number>, figures = 4): Record<string, string> {
  return Object.fromEntries(Object.entries(expected).map(([k, v]) => [k, v.toPrecision(figures)]));
}

export const fieldKeys = (template: DrillTemplate) => template.fields.map((f) => f.key);

/** Fields that depend, directly or through other fields, on `key`. */
export function downstreamOf(template: DrillTemplate, key: string): Set<string> {
  const out = new Set<string>();
  for (const field of template.fields) {
    if ((field.dependsOn ?? []).some((dep) => dep === key || out.has(dep))) out.add(field.key);
  }
  return out;
}

export const relativeDifference = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b)));
