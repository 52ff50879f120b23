/**
 * Turns a drill definition (answer fields that each know how to work themselves out through the
 * engine) into a DrillTemplate with `solve` and `recompute`.
 *
 * Each field's `compute(data, values, engine)` reads the sheet and the values of earlier fields.
 * Solving runs every field in order with the exact values. Recomputing a field for
 * carried-forward credit runs the same `compute` with the exact values except the field's
 * `dependsOn`, which take the trainee's own answers: where an earlier answer is an engine input it
 * goes in as that input, and where it is an intermediate step it goes in as an engine override
 * (`calculate(id, inputs, { overrides })` replaces the step and recomputes what follows). So the
 * value a trainee is compared with is always the engine's own arithmetic, and recomputing with
 * the exact values gives back the exact answer (a test checks this for every template).
 */
import { calculate, InputError } from '../index';
import type { CalculationId } from '../../../shared/calculations/ids';
import type { CalculationInput } from '../../../shared/calculations/schemas';
import type {
  AnswerField,
  CompetencyArea,
  DrillScenario,
  DrillSolution,
  DrillStep,
  DrillTemplate,
  GivenEarlierValues,
} from './types';

export type EngineResults = ReturnType<typeof calculate>['results'];

export interface RunOptions {
  /** Steps to replace, by key (carried-forward values; the exact values when solving). */
  overrides?: Record<string, number>;
  /**
   * Only these steps (and the steps they depend on) go into the worked solution; for a
   * calculation run just for one of its intermediate values.
   */
  show?: readonly string[];
  /**
   * Tells apart the steps of two runs of one calculation in the same drill (NOx and CO through
   * the same correction): prefixes their keys and labels, e.g. { key: 'nox', label: 'NOx' }.
   */
  stepPrefix?: { key: string; label: string };
}

/** Runs engine calculations for one scenario and collects the worked steps of each once. */
export class EngineRunner {
  readonly steps: DrillStep[] = [];
  readonly warnings: string[] = [];
  private readonly recorded = new Set<string>();
  private readonly cache = new Map<string, EngineResults>();

  constructor(private readonly recordSteps: boolean) {}

  run<I extends CalculationId>(id: I, inputs: CalculationInput<I>, options: RunOptions = {}): EngineResults {
    const overrides = options.overrides && Object.keys(options.overrides).length > 0 ? options.overrides : undefined;
    const inputsKey = JSON.stringify([id, inputs, options.stepPrefix ?? null]);
    const callKey = JSON.stringify([inputsKey, overrides ?? null]);
    const cached = this.cache.get(callKey);
    if (cached) return cached;

    const result = calculate(id, inputs, overrides ? { overrides } : undefined);
    this.cache.set(callKey, result.results);
    // When solving, the overrides carry the exact values, so every call with the same inputs
    // yields the same steps: they are recorded once per calculation and input set.
    if (this.recordSteps && !this.recorded.has(inputsKey)) {
      this.recorded.add(inputsKey);
      const shown = options.show ? withDependencies(result.steps, options.show) : undefined;
      const prefix = options.stepPrefix;
      for (const step of result.steps) {
        if (shown && !shown.has(step.key)) continue;
        this.steps.push(
          prefix
            ? {
                ...step,
                key: `${prefix.key}.${step.key}`,
                label: `${prefix.label}: ${step.label}`,
                dependsOn: step.dependsOn.map((dep) => `${prefix.key}.${dep}`),
                calculation: id,
              }
            : { ...step, calculation: id },
        );
      }
      if (!shown) this.warnings.push(...result.warnings);
    }
    return result.results;
  }
}

function withDependencies(steps: readonly { key: string; dependsOn: string[] }[], keys: readonly string[]): Set<string> {
  const byKey = new Map(steps.map((s) => [s.key, s]));
  const shown = new Set<string>();
  const visit = (key: string) => {
    if (shown.has(key)) return;
    shown.add(key);
    for (const dep of byKey.get(key)?.dependsOn ?? []) visit(dep);
  };
  keys.forEach(visit);
  return shown;
}

/** A numeric result, or a loud error naming the calculation (a drill defect, not bad input). */
export function numberAt(results: EngineResults, path: string): number {
  let value: unknown = results;
  for (const part of path.split('.')) {
    value = value !== null && typeof value === 'object' ? (value as Record<string, unknown>)[part] : undefined;
  }
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new Error(`The engine gave no finite number at ${path}.`);
  }
  return value;
}

export interface FieldSpec<D> extends Omit<AnswerField<D>, 'recompute'> {
  /**
   * Works the field out. `values` holds the earlier fields: exact when solving; when recomputing,
   * the trainee's own for this field's `dependsOn` and exact for the rest.
   */
  compute(data: D, values: Readonly<Record<string, number>>, engine: EngineRunner): number;
}

export interface DrillDefinition<D> {
  id: string;
  area: CompetencyArea;
  title: string;
  summary: string;
  methods: string[];
  fields: FieldSpec<D>[];
  generate(seed: number): DrillScenario<D>;
}

export function defineDrill<D>(definition: DrillDefinition<D>): DrillTemplate<D> {
  const specs = definition.fields;
  const byKey = new Map(specs.map((f) => [f.key, f]));
  const seen = new Set<string>();
  for (const field of specs) {
    for (const dep of field.dependsOn ?? []) {
      if (!seen.has(dep)) throw new Error(`${definition.id}: ${field.key} depends on ${dep}, which is not an earlier field.`);
    }
    if (seen.has(field.key)) throw new Error(`${definition.id}: field ${field.key} appears twice.`);
    seen.add(field.key);
  }

  const exactFor = new WeakMap<DrillScenario<D>, Record<string, number>>();

  function solve(scenario: DrillScenario<D>): DrillSolution {
    assertOwn(scenario);
    const engine = new EngineRunner(true);
    const values: Record<string, number> = {};
    for (const field of specs) {
      const value = field.compute(scenario.data, values, engine);
      if (!Number.isFinite(value)) throw new Error(`${definition.id}: ${field.key} is not a finite number.`);
      values[field.key] = value;
    }
    exactFor.set(scenario, { ...values });
    return { expected: values, steps: engine.steps, warnings: engine.warnings };
  }

  function recompute(fieldKey: string, given: GivenEarlierValues, scenario: DrillScenario<D>): number | undefined {
    const field = byKey.get(fieldKey);
    if (!field) throw new Error(`${definition.id} has no field ${fieldKey}.`);
    const dependsOn = field.dependsOn ?? [];
    if (dependsOn.length === 0) throw new Error(`${definition.id}: ${fieldKey} depends on no earlier answer.`);
    assertOwn(scenario);
    const exact = exactFor.get(scenario) ?? solve(scenario).expected;
    const values: Record<string, number> = { ...exact };
    for (const key of dependsOn) {
      if (Object.hasOwn(given, key) && Number.isFinite(given[key])) values[key] = given[key];
    }
    try {
      const value = field.compute(scenario.data, values, new EngineRunner(false));
      return Number.isFinite(value) ? value : undefined;
    } catch (error) {
      // The trainee's own values may be impossible (a moisture fraction of 1.2): nothing to compare.
      if (error instanceof InputError) return undefined;
      throw error;
    }
  }

  function assertOwn(scenario: DrillScenario<D>) {
    if (scenario.templateId !== definition.id) {
      throw new Error(`Scenario belongs to drill ${scenario.templateId}, not ${definition.id}.`);
    }
  }

  const fields: AnswerField<D>[] = specs.map((spec) => {
    const { compute: _compute, ...field } = spec;
    return field.dependsOn && field.dependsOn.length > 0
      ? { ...field, recompute: (given: GivenEarlierValues, scenario: DrillScenario<D>) => recompute(spec.key, given, scenario) }
      : field;
  });

  return {
    id: definition.id,
    area: definition.area,
    title: definition.title,
    summary: definition.summary,
    methods: definition.methods,
    fields,
    generate: definition.generate,
    solve,
    recompute,
  };
}
