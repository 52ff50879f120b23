/**
 * The drill templates, by competency area. Ids are fixed: lessons and exam blueprints refer to them.
 *
 * A template (types.ts) generates a field data sheet from a seed (the seed is stored with the
 * attempt; the same seed always gives the same sheet), solves it through the engine, and can
 * recompute any answer field from the trainee's own earlier answers for carried-forward credit.
 * Templates are written with defineDrill (define.ts): each answer field says how the engine works
 * it out, and solving and recomputing both run that one description. Grading lives in ../grading.
 * The client gets publicAttemptView(template, scenario) only: the sheet and the blank fields.
 */
import { ppbToNumberDensity, ppmToMgPerM3, oxidationLifetime } from './ambient-conversions';
import { diluentCorrection, fFactorRate, ppmToMassRate } from './emission-rates';
import { gasMolecularWeight, moistureTrain, traverseLayout, velocityFlow } from './flow-moisture';
import { biasAndDrift, biasCorrectedAverage, calibrationError } from './gas-analysis';
import { rataBiasAdjustment, rataPairedDifferences, rataRelativeAccuracy } from './monitor-audits';
import { isokineticCheck, particulateLoading, wholeRunReduction } from './particulate';
import type { DrillTemplate } from './types';

export const drillIds = [
  'traverse-layout',
  'moisture-train',
  'velocity-flow',
  'gas-molecular-weight',
  'isokinetic-check',
  'particulate-loading',
  'whole-run-reduction',
  'calibration-error',
  'bias-and-drift',
  'bias-corrected-average',
  'ppm-to-mass-rate',
  'f-factor-rate',
  'diluent-correction',
  'rata-relative-accuracy',
  'rata-bias-adjustment',
  'rata-paired-differences',
  'ppb-to-number-density',
  'ppm-to-mg-per-m3',
  'oxidation-lifetime',
] as const;

export type DrillId = (typeof drillIds)[number];

/** Every template, in area order. A template's scenario data type is its own business. */
export const drillTemplates: readonly DrillTemplate[] = [
  traverseLayout,
  moistureTrain,
  velocityFlow,
  gasMolecularWeight,
  isokineticCheck,
  particulateLoading,
  wholeRunReduction,
  calibrationError,
  biasAndDrift,
  biasCorrectedAverage,
  ppmToMassRate,
  fFactorRate,
  diluentCorrection,
  rataRelativeAccuracy,
  rataBiasAdjustment,
  rataPairedDifferences,
  ppbToNumberDensity,
  ppmToMgPerM3,
  oxidationLifetime,
];

const byId = new Map<string, DrillTemplate>(drillTemplates.map((t) => [t.id, t]));

export function isDrillId(id: unknown): id is DrillId {
  return typeof id === 'string' && byId.has(id);
}

/** The template with this id, or undefined. */
export function getDrillTemplate(id: string): DrillTemplate | undefined {
  return byId.get(id);
}

export { publicAttemptView, type PublicAttemptView } from './public-view';
export type {
  AnswerField,
  CompetencyArea,
  DataTable,
  DrillScenario,
  DrillSolution,
  DrillStep,
  DrillTemplate,
  GivenEarlierValues,
  GivenValue,
  TableColumn,
} from './types';
