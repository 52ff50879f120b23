/** Method 2 (40 CFR Part 60, App. A-1): stack gas velocity and volumetric flow rate, Type S pitot. */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import {
  IN_H2O_PER_IN_HG,
  MINUTES_PER_HOUR,
  RANKINE_OFFSET,
  SECONDS_PER_HOUR,
  SECONDS_PER_MINUTE,
  STD_PRESSURE_IN_HG,
  STD_TEMP_R,
} from './constants';
import type { StepSpec, Worksheet } from './worksheet';

/** Pitot velocity constant, English units, ft/s·[(lb/lb-mol)(in. Hg)/((°R)(in. H2O))]^½ (Method 2, Eq. 2-9, Kp). */
export const KP_ENGLISH = 85.49;
/** Molecular weight of water as Method 2 writes it in Ms = Md(1 − Bws) + 18.0 Bws (Method 2, Eq. 2-5). */
export const WATER_MOLECULAR_WEIGHT = 18.0;
const SQUARE_INCHES_PER_SQUARE_FOOT = 144;

export const WET_MW_STEP: StepSpec = {
  key: 'wetMolecularWeight',
  label: 'Molecular weight, wet basis, Ms',
  equation: String.raw`M_s = M_d\,(1 - B_{ws}) + 18.0\,B_{ws}`,
  unit: 'lb/lb-mol',
  source: 'Method 2, Eq. 2-5',
  dependsOn: [],
  inputs: ['dryMolecularWeight', 'moistureFraction'],
};

export function wetMolecularWeight(dryMolecularWeight: number, moistureFraction: number): number {
  return dryMolecularWeight * (1 - moistureFraction) + WATER_MOLECULAR_WEIGHT * moistureFraction;
}

const PS_STEP: StepSpec = {
  key: 'absoluteStackPressure_inHg',
  label: 'Absolute stack pressure, Ps',
  equation: String.raw`P_s = P_{bar} + \frac{P_g}{13.6}`,
  unit: 'in. Hg',
  source: 'Method 2, §12',
  inputs: ['barometric_inHg', 'staticPressure_inH2O'],
};
const MEAN_SQRT_DP_STEP: StepSpec = {
  key: 'meanSqrtDeltaP',
  label: 'Average of the square roots of the velocity heads',
  equation: String.raw`\overline{\sqrt{\Delta p}} = \frac{1}{n}\sum_{i=1}^{n}\sqrt{\Delta p_i}`,
  unit: '(in. H2O)^½',
  source: 'Method 2, Eq. 2-9',
  inputs: ['deltaP_inH2O'],
};
const TS_STEP: StepSpec = {
  key: 'absoluteStackTemp_R',
  label: 'Average absolute stack temperature, Ts',
  equation: String.raw`T_s = \bar{t}_s + 460`,
  unit: '°R',
  source: 'Method 2, §12',
  inputs: ['stackTemp_F'],
};
const VELOCITY_STEP: StepSpec = {
  key: 'velocity_fps',
  label: 'Average stack gas velocity, vs',
  equation: String.raw`v_s = 85.49\,C_p\,\overline{\sqrt{\Delta p}}\,\sqrt{\frac{T_s}{P_s\,M_s}}`,
  unit: 'ft/s',
  source: 'Method 2, Eq. 2-9',
  dependsOn: ['meanSqrtDeltaP', 'absoluteStackTemp_R', 'absoluteStackPressure_inHg', 'wetMolecularWeight'],
  inputs: ['pitotCoefficient'],
};
const AREA_FROM_DIAMETER_STEP: StepSpec = {
  key: 'stackArea_ft2',
  label: 'Stack cross-sectional area, A',
  equation: String.raw`A = \frac{\pi}{4}\,\frac{D^2}{144}`,
  unit: 'ft²',
  source: 'Geometry (circle, in.² to ft²)',
  inputs: ['stackDiameter_in'],
};
const AREA_GIVEN_STEP: StepSpec = {
  key: 'stackArea_ft2',
  label: 'Stack cross-sectional area, A',
  equation: String.raw`A\ \text{(given)}`,
  unit: 'ft²',
  source: 'Given',
  inputs: ['stackArea_ft2'],
};
const ACFM_STEP: StepSpec = {
  key: 'actualFlow_acfm',
  label: 'Actual volumetric flow rate, Qa',
  equation: String.raw`Q_a = 60\,v_s\,A`,
  unit: 'acfm',
  source: 'Method 2, §12',
  dependsOn: ['velocity_fps', 'stackArea_ft2'],
};
const DSCFH_STEP: StepSpec = {
  key: 'dryStdFlow_dscfh',
  label: 'Dry volumetric flow rate at standard conditions, Qsd',
  equation: String.raw`Q_{sd} = 3600\,(1 - B_{ws})\,v_s\,A\,\frac{528\,P_s}{T_s\,(29.92)}`,
  unit: 'dscf/hr',
  source: 'Method 2, Eq. 2-10',
  dependsOn: ['velocity_fps', 'stackArea_ft2', 'absoluteStackPressure_inHg', 'absoluteStackTemp_R'],
  inputs: ['moistureFraction'],
};
const DSCFM_STEP: StepSpec = {
  key: 'dryStdFlow_dscfm',
  label: 'Dry volumetric flow rate at standard conditions, per minute',
  equation: String.raw`Q_{sd}/60`,
  unit: 'dscfm',
  source: 'Unit conversion (60 min/hr)',
  dependsOn: ['dryStdFlow_dscfh'],
};

export function stackFlow(input: CalculationInputParsed<'stack-flow'>, w: Worksheet) {
  const bws = input.moistureFraction;

  const ps = w.number(PS_STEP, input.barometric_inHg + input.staticPressure_inH2O / IN_H2O_PER_IN_HG);
  if (ps <= 0) throw w.refuse(PS_STEP, ps, 'an absolute pressure must be above zero');
  const ms = w.number(WET_MW_STEP, wetMolecularWeight(input.dryMolecularWeight, bws));

  // Eq. 2-9 averages the square roots; the root of the averaged Δp is a common, wrong shortcut.
  const dp = input.deltaP_inH2O;
  let sumSqrt = 0;
  for (let i = 0; i < dp.length; i++) sumSqrt += Math.sqrt(dp[i]);
  const meanSqrtDp = w.number(MEAN_SQRT_DP_STEP, sumSqrt / dp.length);

  const temps = input.stackTemp_F;
  let meanTemp_F: number;
  if (typeof temps === 'number') {
    meanTemp_F = temps;
  } else {
    let sum = 0;
    for (let i = 0; i < temps.length; i++) sum += temps[i];
    meanTemp_F = sum / temps.length;
  }
  const ts = w.number(TS_STEP, meanTemp_F + RANKINE_OFFSET);

  const vs = w.number(VELOCITY_STEP, KP_ENGLISH * input.pitotCoefficient * meanSqrtDp * Math.sqrt(ts / (ps * ms)));

  const area =
    input.stackDiameter_in !== undefined
      ? w.number(AREA_FROM_DIAMETER_STEP, (Math.PI / 4) * (input.stackDiameter_in ** 2 / SQUARE_INCHES_PER_SQUARE_FOOT))
      : w.number(AREA_GIVEN_STEP, input.stackArea_ft2 as number);

  const acfm = w.number(ACFM_STEP, SECONDS_PER_MINUTE * vs * area);
  const dscfh = w.number(
    DSCFH_STEP,
    SECONDS_PER_HOUR * (1 - bws) * vs * area * ((STD_TEMP_R * ps) / (ts * STD_PRESSURE_IN_HG)),
  );
  const dscfm = w.number(DSCFM_STEP, dscfh / MINUTES_PER_HOUR);

  // Method 1, §11.4 (section from memory): zero velocity heads call for a cyclonic-flow check.
  if (dp.some((reading) => reading === 0)) {
    const zeros = dp.filter((reading) => reading === 0).length;
    w.warn(
      `${zeros} of ${dp.length} velocity heads are zero. Check for cyclonic or stagnant flow at those points before accepting the traverse (Method 1, §11.4).`,
    );
  }

  return {
    absoluteStackPressure_inHg: ps,
    wetMolecularWeight: ms,
    meanSqrtDeltaP: meanSqrtDp,
    absoluteStackTemp_R: ts,
    velocity_fps: vs,
    stackArea_ft2: area,
    actualFlow_acfm: acfm,
    dryStdFlow_dscfh: dscfh,
    dryStdFlow_dscfm: dscfm,
  };
}
