import { InputError } from './errors';
import type { Step } from './types';

export interface StepSpec {
  key: string;
  label: string;
  equation: string;
  unit: string;
  source: string;
  dependsOn?: readonly string[];
  /** Input fields the step reads directly; named in the error if its value is ever not finite. */
  inputs?: readonly string[];
}

const noDependencies: readonly string[] = [];

/** Short display form for warnings; results keep full precision. */
export function fmt(value: number, significant = 4): string {
  return String(Number(value.toPrecision(significant)));
}

/**
 * Records the worked steps of one calculation. Every numeric step passes through `number`, which
 * applies a caller's override and refuses non-finite values, so no NaN or Infinity can reach a
 * result or a step.
 */
export class Worksheet {
  readonly steps: Step[] = [];
  readonly warnings: string[] = [];
  private readonly used: string[] = [];

  constructor(private readonly overrides?: Readonly<Record<string, number>>) {}

  number(spec: StepSpec, computed: number): number {
    let value = computed;
    if (this.overrides !== undefined && Object.hasOwn(this.overrides, spec.key)) {
      value = this.overrides[spec.key];
      this.used.push(spec.key);
    }
    if (!Number.isFinite(value)) throw this.nonFinite(spec, value);
    this.push(spec, value);
    return value;
  }

  flag(spec: StepSpec, value: boolean): boolean {
    this.push(spec, value);
    return value;
  }

  warn(message: string): void {
    this.warnings.push(message);
  }

  /**
   * An InputError for a step value the method cannot go on with (a zero absolute pressure, say),
   * naming the override if the step was overridden, otherwise the step's inputs.
   */
  refuse(spec: StepSpec, value: number, reason: string): InputError {
    const fields = this.used.includes(spec.key) ? [`overrides.${spec.key}`] : [...(spec.inputs ?? ['inputs'])];
    return new InputError(fields.map((field) => ({ field, message: `${field} gives ${spec.key} = ${fmt(value)}; ${reason}` })));
  }

  /** Override keys that matched no numeric step. */
  unusedOverrides(): string[] {
    if (this.overrides === undefined) return [];
    return Object.keys(this.overrides).filter((key) => !this.used.includes(key));
  }

  private push(spec: StepSpec, value: number | boolean): void {
    this.steps.push({
      key: spec.key,
      label: spec.label,
      equation: spec.equation,
      value,
      unit: spec.unit,
      source: spec.source,
      dependsOn: (spec.dependsOn ?? noDependencies).slice(),
    });
  }

  private nonFinite(spec: StepSpec, value: number): InputError {
    const what = `makes ${spec.key} (${spec.label}) come out as ${value}; check it`;
    // An override upstream is the likelier culprit than the validated inputs, so name it alone.
    const fields =
      this.used.length > 0
        ? this.used.map((key) => ({ field: `overrides.${key}`, message: `overrides.${key} ${what}` }))
        : (spec.inputs ?? []).map((field) => ({ field, message: `${field}, with the other inputs, ${what}` }));
    if (fields.length === 0) fields.push({ field: 'inputs', message: `inputs, together, make ${spec.key} (${spec.label}) come out as ${value}; check them` });
    return new InputError(fields);
  }
}
