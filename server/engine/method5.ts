/** Method 5 (40 CFR Part 60, App. A-3): isokinetic variation and particulate concentration. */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { GRAINS_PER_POUND } from '../../shared/units';
import { RANKINE_OFFSET } from './constants';
import { fmt, type StepSpec, type Worksheet } from './worksheet';

/**
 * Isokinetic constant, English units (Method 5, Eq. 5-9; 0.09450 from memory, confirm against the
 * method text). It is 100 × Pstd/(Tstd × 60 s/min) = 100 × 29.92/(528 × 60) = 0.09444, rounded.
 */
export const K_ISOKINETIC = 0.0945;
/** Grains per milligram as Method 5 rounds it (Eq. 5-6, K2 for English units; exact 1/64.79891 = 0.015432). */
export const K2_GR_PER_MG = 0.0154;
/** Cubic metres per cubic foot as Method 5 rounds it (exact 0.028316846592). */
export const M3_PER_FT3_METHOD5 = 0.028317;
/** Method 5, §12.12 (from memory, check the section number): results are acceptable for 90 % ≤ I ≤ 110 %. */
export const ISOKINETIC_MIN_PCT = 90;
export const ISOKINETIC_MAX_PCT = 110;
const SQUARE_INCHES_PER_SQUARE_FOOT = 144;

const NOZZLE_AREA_STEP: StepSpec = {
  key: 'nozzleArea_ft2',
  label: 'Nozzle cross-sectional area, An',
  equation: String.raw`A_n = \frac{\pi}{4}\,\frac{D_n^2}{144}`,
  unit: 'ft²',
  source: 'Geometry (circle, in.² to ft²)',
  inputs: ['nozzleDiameter_in'],
};
const TS_STEP: StepSpec = {
  key: 'absoluteStackTemp_R',
  label: 'Absolute stack temperature, Ts',
  equation: String.raw`T_s = t_s + 460`,
  unit: '°R',
  source: 'Method 5, §12',
  inputs: ['stackTemp_F'],
};
const ISOKINETIC_STEP: StepSpec = {
  key: 'isokinetic_pct',
  label: 'Isokinetic variation, I',
  equation: String.raw`I = \frac{0.09450\,T_s\,V_{m(std)}}{P_s\,v_s\,A_n\,\theta\,(1 - B_{ws})}`,
  unit: '%',
  source: 'Method 5, Eq. 5-9',
  dependsOn: ['absoluteStackTemp_R', 'nozzleArea_ft2'],
  inputs: ['meterVolumeStd_dscf', 'absoluteStackPressure_inHg', 'velocity_fps', 'sampleTime_min', 'moistureFraction'],
};
const WITHIN_LIMITS_STEP: StepSpec = {
  key: 'withinLimits',
  label: 'Isokinetic variation within 90–110 %',
  equation: String.raw`90 \le I \le 110`,
  unit: '',
  source: 'Method 5, §12.12',
  dependsOn: ['isokinetic_pct'],
};

export function isokinetic(input: CalculationInputParsed<'isokinetic'>, w: Worksheet) {
  const an = w.number(NOZZLE_AREA_STEP, (Math.PI / 4) * (input.nozzleDiameter_in ** 2 / SQUARE_INCHES_PER_SQUARE_FOOT));
  const ts = w.number(TS_STEP, input.stackTemp_F + RANKINE_OFFSET);
  const iso = w.number(
    ISOKINETIC_STEP,
    (K_ISOKINETIC * ts * input.meterVolumeStd_dscf) /
      (input.absoluteStackPressure_inHg * input.velocity_fps * an * input.sampleTime_min * (1 - input.moistureFraction)),
  );
  const within = w.flag(WITHIN_LIMITS_STEP, iso >= ISOKINETIC_MIN_PCT && iso <= ISOKINETIC_MAX_PCT);
  if (!within) {
    w.warn(
      `Isokinetic variation is ${fmt(iso)} %, outside the 90–110 % Method 5 accepts (§12.12): repeat the run unless the Administrator accepts the results.`,
    );
  }
  return { nozzleArea_ft2: an, absoluteStackTemp_R: ts, isokinetic_pct: iso, withinLimits: within };
}

const GR_STEP: StepSpec = {
  key: 'concentration_grPerDscf',
  label: 'Particulate concentration, cs',
  equation: String.raw`c_s = 0.0154\,\frac{m_n}{V_{m(std)}}`,
  unit: 'gr/dscf',
  source: 'Method 5, Eq. 5-6',
  inputs: ['filterCatch_mg', 'meterVolumeStd_dscf'],
};
const DSCM_STEP: StepSpec = {
  key: 'meterVolumeStd_dscm',
  label: 'Sample volume at standard conditions, metric',
  equation: String.raw`V_{m(std)}\,[\text{dscm}] = 0.028317\,V_{m(std)}\,[\text{dscf}]`,
  unit: 'dscm',
  source: 'Method 5, §12 (1 ft³ = 0.028317 m³)',
  inputs: ['meterVolumeStd_dscf'],
};
const MG_STEP: StepSpec = {
  key: 'concentration_mgPerDscm',
  label: 'Particulate concentration, metric',
  equation: String.raw`c_s = \frac{m_n}{V_{m(std)}\,[\text{dscm}]}`,
  unit: 'mg/dscm',
  source: 'Method 5, Eq. 5-6 (metric form)',
  dependsOn: ['meterVolumeStd_dscm'],
  inputs: ['filterCatch_mg'],
};
const LB_HR_STEP: StepSpec = {
  key: 'emissionRate_lbPerHr',
  label: 'Particulate emission rate',
  equation: String.raw`E = \frac{c_s\,Q_{sd}}{7000}`,
  unit: 'lb/hr',
  source: 'Unit conversion (7000 gr/lb)',
  dependsOn: ['concentration_grPerDscf'],
  inputs: ['dryStdFlow_dscfh'],
};

export function particulate(input: CalculationInputParsed<'particulate'>, w: Worksheet) {
  const gr = w.number(GR_STEP, (K2_GR_PER_MG * input.filterCatch_mg) / input.meterVolumeStd_dscf);
  const dscm = w.number(DSCM_STEP, input.meterVolumeStd_dscf * M3_PER_FT3_METHOD5);
  const mg = w.number(MG_STEP, input.filterCatch_mg / dscm);
  const results: Record<string, number> = {
    concentration_grPerDscf: gr,
    meterVolumeStd_dscm: dscm,
    concentration_mgPerDscm: mg,
  };
  if (input.dryStdFlow_dscfh !== undefined) {
    results.emissionRate_lbPerHr = w.number(LB_HR_STEP, (gr * input.dryStdFlow_dscfh) / GRAINS_PER_POUND);
  }
  return results;
}
