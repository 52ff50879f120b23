/**
 * Turns zod issues into the `{ field, message }` list of the API's error shape. Every schema in
 * this folder phrases its errors as predicates ("must be a number between 0 and 25"), so the
 * sentence is the field's dotted path followed by that predicate.
 */
import type { z } from 'zod';
import type { FieldProblem } from '../errors';

export function fieldPath(path: readonly PropertyKey[]): string {
  return path.map((part) => String(part)).join('.');
}

export function issuesToProblems(issues: readonly z.core.$ZodIssue[]): FieldProblem[] {
  const problems: FieldProblem[] = [];
  const seen = new Set<string>();
  const add = (field: string, message: string) => {
    const key = `${field}\u0000${message}`;
    if (seen.has(key)) return;
    seen.add(key);
    problems.push({ field, message });
  };
  for (const issue of issues) {
    const parent = fieldPath(issue.path);
    if (issue.code === 'unrecognized_keys') {
      for (const key of issue.keys) {
        // An empty key still needs a visible name.
        const name = key === '' ? '""' : key;
        const field = parent ? `${parent}.${name}` : name;
        add(
          field,
          parent
            ? `${field} is not a field of ${parent}; remove it or check its spelling`
            : `${field} is not an input of this calculation; remove it or check its spelling`,
        );
      }
      continue;
    }
    const field = parent || 'inputs';
    add(field, `${field} ${issue.message}`);
  }
  if (problems.length === 0) add('inputs', 'inputs are not valid for this calculation');
  return problems;
}
