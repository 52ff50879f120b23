/**
 * The calculation engine's single entry point. Pure: no I/O, no clock, no randomness.
 * Bad input of any kind ends in an InputError listing each bad field; nothing else is thrown,
 * and no result or step is ever NaN or Infinity.
 */
import { z } from 'zod';
import { calculationIds, isCalculationId, type CalculationId } from '../../shared/calculations/ids';
import { issuesToProblems } from '../../shared/calculations/problems';
import { calculationSchemas, type CalculationInputParsed } from '../../shared/calculations/schemas';
import { chemicalLifetime, concentrationConversion, numberDensity } from './ambient';
import { diluentCorrection } from './diluent';
import { InputError } from './errors';
import { traversePoints } from './method1';
import { stackFlow } from './method2';
import { gasComposition } from './method3';
import { moisture } from './method4';
import { isokinetic, particulate } from './method5';
import { analyzerChecks } from './method7e';
import { fFactorRate, massEmissionRate } from './method19';
import { relativeAccuracy } from './ps2';
import type { CalculateOptions, CalculationResult, ResultValue } from './types';
import { Worksheet } from './worksheet';

export { calculationIds, InputError };
export type { CalculateOptions, CalculationId, CalculationResult, ResultValue };
export type { Step } from './types';
export { calculationMeta } from '../../shared/calculations/meta';
export { calculationSchemas };

type Compute<I extends CalculationId> = (input: CalculationInputParsed<I>, w: Worksheet) => Record<string, ResultValue>;

const computations: { [I in CalculationId]: Compute<I> } = {
  'traverse-points': traversePoints,
  'gas-composition': gasComposition,
  moisture,
  'stack-flow': stackFlow,
  isokinetic,
  particulate,
  'mass-emission-rate': massEmissionRate,
  'f-factor-rate': fFactorRate,
  'diluent-correction': diluentCorrection,
  'concentration-conversion': concentrationConversion,
  'number-density': numberDensity,
  'chemical-lifetime': chemicalLifetime,
  'analyzer-checks': analyzerChecks,
  'relative-accuracy': relativeAccuracy,
};

/**
 * Validation uses zod's ahead-of-time compiled parsers (about ten times faster on the hot path);
 * any input the fast path does not accept is re-parsed by the ordinary runtime parser, so errors
 * and their messages are the schemas' own. The exported schemas stay uncompiled for JSON Schema
 * and forms; a unit test checks both parse alike.
 */
const parsers: { [I in CalculationId]: (typeof calculationSchemas)[I] } = Object.fromEntries(
  calculationIds.map((id) => [id, z.compile(calculationSchemas[id])]),
) as { [I in CalculationId]: (typeof calculationSchemas)[I] };

function describe(value: unknown): string {
  if (typeof value === 'string') return JSON.stringify(value.length > 60 ? `${value.slice(0, 60)}…` : value);
  if (value === null) return 'null';
  return `a ${typeof value}`;
}

function readOverrides(options: unknown): Record<string, number> | undefined {
  if (options === undefined || options === null) return undefined;
  if (typeof options !== 'object') {
    throw new InputError([{ field: 'options', message: 'options must be an object such as { overrides: { velocity_fps: 52.1 } }' }]);
  }
  const overrides = (options as { overrides?: unknown }).overrides;
  if (overrides === undefined) return undefined;
  if (overrides === null || typeof overrides !== 'object' || Array.isArray(overrides)) {
    throw new InputError([{ field: 'overrides', message: 'overrides must be an object of step keys and numbers' }]);
  }
  const problems = [];
  const clean: Record<string, number> = {};
  for (const [key, value] of Object.entries(overrides)) {
    if (typeof value !== 'number' || !Number.isFinite(value)) {
      problems.push({ field: `overrides.${key}`, message: `overrides.${key} must be a finite number` });
    } else {
      clean[key] = value;
    }
  }
  if (problems.length > 0) throw new InputError(problems);
  return clean;
}

/** Path of the first number that is not finite, or undefined when every number is finite. */
function firstNonFinite(value: unknown, path: string): string | undefined {
  if (typeof value === 'number') return Number.isFinite(value) ? undefined : path;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const bad = firstNonFinite(value[i], `${path}.${i}`);
      if (bad !== undefined) return bad;
    }
    return undefined;
  }
  if (value !== null && typeof value === 'object') {
    for (const key in value) {
      const bad = firstNonFinite((value as Record<string, unknown>)[key], path ? `${path}.${key}` : key);
      if (bad !== undefined) return bad;
    }
  }
  return undefined;
}

function run<I extends CalculationId>(id: I, inputs: unknown, options: unknown): CalculationResult {
  const parsed = parsers[id].safeParse(inputs);
  if (!parsed.success) throw new InputError(issuesToProblems(parsed.error.issues));
  const overrides = readOverrides(options);
  const w = new Worksheet(overrides);
  const results = (computations[id] as Compute<I>)(parsed.data as CalculationInputParsed<I>, w);

  const unused = w.unusedOverrides();
  if (unused.length > 0) {
    throw new InputError(
      unused.map((key) => ({
        field: `overrides.${key}`,
        message: `overrides.${key} is not a numeric step of ${id} for these inputs`,
      })),
    );
  }
  // Last guard: every step already refuses non-finite values; this also covers values assembled outside steps.
  const bad = firstNonFinite(results, '');
  if (bad !== undefined) {
    throw new InputError([{ field: 'inputs', message: `inputs give a result (${bad}) that is not a finite number; check them` }]);
  }
  return { id, results, steps: w.steps, warnings: w.warnings };
}

/**
 * Run one calculation. `inputs` is validated against the calculation's schema; `options.overrides`
 * replaces numeric steps by key (a trainee's own earlier answers) and recomputes what follows.
 * Throws InputError, and only InputError.
 */
export function calculate(id: CalculationId, inputs: unknown, options?: CalculateOptions): CalculationResult {
  try {
    if (!isCalculationId(id)) {
      throw new InputError([
        { field: 'id', message: `id ${describe(id)} is not a calculation; use one of ${calculationIds.join(', ')}` },
      ]);
    }
    return run(id, inputs, options);
  } catch (error) {
    if (error instanceof InputError) throw error;
    // A defect, not bad input; the cause stays attached for the logs, and tests assert it never happens.
    throw new InputError([{ field: 'inputs', message: 'inputs could not be calculated; check them against the method' }], {
      cause: error,
    });
  }
}
