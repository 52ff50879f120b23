/** The fixed calculation ids (ENGINE.md). New ids are appended, never renamed. */
export const calculationIds = [
  'traverse-points',
  'gas-composition',
  'moisture',
  'stack-flow',
  'isokinetic',
  'particulate',
  'mass-emission-rate',
  'f-factor-rate',
  'diluent-correction',
  'concentration-conversion',
  'number-density',
  'chemical-lifetime',
  'analyzer-checks',
  'relative-accuracy',
] as const;

export type CalculationId = (typeof calculationIds)[number];

const idSet: ReadonlySet<string> = new Set(calculationIds);

export function isCalculationId(value: unknown): value is CalculationId {
  return typeof value === 'string' && idSet.has(value);
}
