import type { CalculationId } from '../../shared/calculations/ids';

export type { CalculationId };

/** One line of worked solution, in the order a crew would write it down. */
export interface Step {
  /** Equals the result's path where the step produces a result (`velocity_fps`, `points.0.distanceFromWall_in`). */
  key: string;
  label: string;
  /** LaTeX. */
  equation: string;
  value: number | boolean;
  unit: string;
  /** Published source, e.g. "Method 2, Eq. 2-9". */
  source: string;
  /** Keys of earlier steps this one is computed from (for carried-forward credit). */
  dependsOn: string[];
}

export type ResultValue = number | boolean | object[] | number[];

export interface CalculationResult {
  id: CalculationId;
  results: Record<string, ResultValue>;
  steps: Step[];
  warnings: string[];
}

export interface CalculateOptions {
  /**
   * Replace the value of numeric steps (by key) and recompute every later step from them, e.g. a
   * trainee's own `moistureFraction`, for carried-forward credit. Each must be a finite number and
   * the key of a numeric step this calculation produces.
   */
  overrides?: Record<string, number>;
}
