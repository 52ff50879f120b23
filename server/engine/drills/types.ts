import type { calculate } from '../index';

/** One worked step as the engine reports it. */
export type EngineStep = ReturnType<typeof calculate>['steps'][number];

/** Our competency areas (PRODUCT.md), one key each. */
export type CompetencyArea =
  | 'flow-moisture'
  | 'particulate'
  | 'gas-analysis'
  | 'emission-rates'
  | 'monitor-audits'
  | 'ambient-conversions';

/** One value on the field data sheet the trainee works from. */
export interface GivenValue {
  key: string;
  label: string;
  /** A number exactly as the crew recorded it, or a word (a pollutant, a fuel). */
  value: number | string;
  /** Unit shown beside the value; '' for a count or a word. */
  unit: string;
}

export interface TableColumn {
  key: string;
  label: string;
  unit: string;
}

/** A block of readings, e.g. the traverse: one row per point. */
export interface DataTable {
  key: string;
  title: string;
  columns: TableColumn[];
  rows: (number | string)[][];
}

/**
 * What the trainee sees: a titled field data sheet. `data` holds the same recorded values typed
 * for `solve()`; it is server-side only and never holds a value the trainee must work out.
 */
export interface DrillScenario<D = unknown> {
  templateId: string;
  seed: number;
  title: string;
  intro: string;
  given: GivenValue[];
  tables: DataTable[];
  data: D;
}

/** A worked step from the engine, tagged with the calculation that produced it. */
export interface DrillStep extends EngineStep {
  calculation: string;
}

export interface DrillSolution {
  /** Exact (full double precision) value of every answer field, by key. */
  expected: Record<string, number>;
  /** The engine's worked steps, in the order the calculations run. */
  steps: DrillStep[];
  warnings: string[];
}

/** Earlier answer values by field key: the trainee's own where given, the exact ones otherwise. */
export type GivenEarlierValues = Readonly<Record<string, number>>;

export interface AnswerField<D = unknown> {
  key: string;
  label: string;
  unit: string;
  /** Where the equation comes from, e.g. "Method 2, Eq. 2-9". */
  source: string;
  /** Relative tolerance in percent; 1 when absent (ENGINE.md, "Drills and grading"). */
  tolerancePct?: number;
  /** An absolute tolerance in the field's unit, for values that sit near zero. */
  absoluteTolerance?: number;
  /** Earlier answer fields this one is computed from (carried-forward credit). */
  dependsOn?: string[];
  /**
   * The value this field takes when its `dependsOn` fields have the given values and everything
   * else is as recorded on the sheet. Required exactly when `dependsOn` is set. Returns undefined
   * when the given values cannot be worked with (the engine refuses them).
   */
  recompute?(given: GivenEarlierValues, scenario: DrillScenario<D>): number | undefined;
}

export interface DrillTemplate<D = unknown> {
  id: string;
  area: CompetencyArea;
  title: string;
  summary: string;
  /** Published methods the drill exercises, e.g. ["Method 2", "Method 4"]. */
  methods: string[];
  /** Answer fields in the order the trainee works them. */
  fields: AnswerField<D>[];
  /** A reproducible scenario: the same seed always gives the same sheet. */
  generate(seed: number): DrillScenario<D>;
  /** Expected values of every field and the engine's steps. */
  solve(scenario: DrillScenario<D>): DrillSolution;
  /** A field's value recomputed from given earlier values (see AnswerField.recompute). */
  recompute(fieldKey: string, given: GivenEarlierValues, scenario: DrillScenario<D>): number | undefined;
}
