/**
 * What a form or an API listing needs to present each calculation: title, description, every
 * input with its label, unit and default (read from the schemas, so they are written once), and
 * every result key with its label and unit.
 */
import { z } from 'zod';
import type { FieldMeta } from './fields';
import { calculationIds, type CalculationId } from './ids';
import { calculationSchemas } from './schemas';

export interface InputMeta extends FieldMeta {
  required: boolean;
  default?: unknown;
}

export interface OutputMeta {
  label: string;
  unit: string;
}

export interface CalculationMeta {
  title: string;
  description: string;
  /** Keyed by dotted path; array items use `[]`, e.g. `calibrationGases[].certified`. */
  inputs: Record<string, InputMeta>;
  outputs: Record<string, OutputMeta>;
}

const out = (label: string, unit: string): OutputMeta => ({ label, unit });
const sameAsRuns = 'same as the run values';

const described: Record<CalculationId, Omit<CalculationMeta, 'inputs'>> = {
  'traverse-points': {
    title: 'Traverse points (Method 1)',
    description:
      'Equal-area traverse point locations across one diameter of a circular stack, with points too close to the wall relocated.',
    outputs: { points: out('Traverse points, from the port-side wall across', '') },
  },
  'gas-composition': {
    title: 'Gas composition and molecular weight (Method 3)',
    description: 'Nitrogen by difference, dry molecular weight, and wet molecular weight when the moisture is known.',
    outputs: {
      n2_pct: out('Nitrogen (by difference), dry basis', '%'),
      dryMolecularWeight: out('Dry molecular weight, Md', 'lb/lb-mol'),
      wetMolecularWeight: out('Molecular weight, wet basis, Ms', 'lb/lb-mol'),
    },
  },
  moisture: {
    title: 'Moisture content (Method 4)',
    description:
      'Water vapor and dry gas volumes at standard conditions and the moisture fraction, checked against saturation when stack temperature and pressure are given.',
    outputs: {
      condensateVaporStd_scf: out('Water vapor condensed in the impingers, Vwc(std)', 'scf'),
      silicaGelVaporStd_scf: out('Water vapor collected in the silica gel, Vwsg(std)', 'scf'),
      waterVaporStd_scf: out('Total water vapor at standard conditions', 'scf'),
      meterVolumeStd_dscf: out('Dry gas volume metered, at standard conditions, Vm(std)', 'dscf'),
      moistureFraction: out('Moisture fraction, Bws', ''),
      waterVaporPressure_inHg: out('Saturation vapor pressure of water at stack temperature', 'in. Hg'),
      saturationMoistureFraction: out('Moisture fraction at saturation', ''),
      moistureFractionToUse: out('Moisture fraction to use (the lower of measured and saturation)', ''),
    },
  },
  'stack-flow': {
    title: 'Stack gas velocity and flow rate (Method 2)',
    description: 'Velocity from the pitot traverse, then actual and dry standard volumetric flow rates.',
    outputs: {
      absoluteStackPressure_inHg: out('Absolute stack pressure, Ps', 'in. Hg'),
      wetMolecularWeight: out('Molecular weight, wet basis, Ms', 'lb/lb-mol'),
      meanSqrtDeltaP: out('Average of the square roots of the velocity heads', '(in. H2O)^½'),
      absoluteStackTemp_R: out('Average absolute stack temperature, Ts', '°R'),
      velocity_fps: out('Average stack gas velocity, vs', 'ft/s'),
      stackArea_ft2: out('Stack cross-sectional area, A', 'ft²'),
      actualFlow_acfm: out('Actual volumetric flow rate, Qa', 'acfm'),
      dryStdFlow_dscfh: out('Dry volumetric flow rate at standard conditions, Qsd', 'dscf/hr'),
      dryStdFlow_dscfm: out('Dry volumetric flow rate at standard conditions, per minute', 'dscfm'),
    },
  },
  isokinetic: {
    title: 'Isokinetic variation (Method 5)',
    description: 'How closely the sampling rate matched the stack gas velocity at the nozzle; 90–110 % is acceptable.',
    outputs: {
      nozzleArea_ft2: out('Nozzle cross-sectional area, An', 'ft²'),
      absoluteStackTemp_R: out('Absolute stack temperature, Ts', '°R'),
      isokinetic_pct: out('Isokinetic variation, I', '%'),
      withinLimits: out('Isokinetic variation within 90–110 %', ''),
    },
  },
  particulate: {
    title: 'Particulate concentration and emission rate (Method 5)',
    description: 'Particulate concentration in gr/dscf and mg/dscm, and the emission rate when the flow is given.',
    outputs: {
      concentration_grPerDscf: out('Particulate concentration, cs', 'gr/dscf'),
      meterVolumeStd_dscm: out('Sample volume at standard conditions, metric', 'dscm'),
      concentration_mgPerDscm: out('Particulate concentration, metric', 'mg/dscm'),
      emissionRate_lbPerHr: out('Particulate emission rate', 'lb/hr'),
    },
  },
  'mass-emission-rate': {
    title: 'Mass emission rate from ppm',
    description: 'A dry ppm concentration and dry standard flow turned into lb/hr, kg/hr and tons/yr.',
    outputs: {
      conversionFactor_lbPerScfPpm: out('Conversion factor, ppm to lb/scf', 'lb/scf per ppm'),
      concentration_lbPerDscf: out('Concentration, lb/dscf', 'lb/dscf'),
      emissionRate_lbPerHr: out('Mass emission rate', 'lb/hr'),
      emissionRate_kgPerHr: out('Mass emission rate, metric', 'kg/hr'),
      emissionRate_tonsPerYear: out('Annual emissions at continuous operation', 'tons/yr'),
    },
  },
  'f-factor-rate': {
    title: 'Emission rate in lb/MMBtu (Method 19 F factors)',
    description: 'Emission rate per heat input from a dry concentration and the fuel’s F factor, O2-based (Fd) or CO2-based (Fc).',
    outputs: {
      conversionFactor_lbPerScfPpm: out('Conversion factor, ppm to lb/scf', 'lb/scf per ppm'),
      concentration_lbPerDscf: out('Concentration, lb/dscf', 'lb/dscf'),
      fdFactor_dscfPerMMBtu: out('Dry F factor, Fd', 'dscf/MMBtu'),
      fcFactor_scfPerMMBtu: out('Carbon F factor, Fc', 'scf CO2/MMBtu'),
      emissionRate_lbPerMMBtu: out('Emission rate', 'lb/MMBtu'),
    },
  },
  'diluent-correction': {
    title: 'Correction to a reference O2',
    description: 'A concentration measured at one O2 level expressed at the reference O2 of a standard.',
    outputs: {
      o2CorrectionFactor: out('O2 correction factor', ''),
      correctedConcentration: out('Concentration corrected to the reference O2', 'same as input'),
    },
  },
  'concentration-conversion': {
    title: 'ppmv ⇄ mg/m³',
    description: 'Converts between volume mixing ratio and mass concentration at a given temperature and pressure.',
    outputs: {
      ppmv: out('Volume mixing ratio', 'ppmv'),
      mgPerM3: out('Mass concentration', 'mg/m³'),
      molarVolume_L: out('Molar volume of an ideal gas', 'L/mol'),
      molecularWeight: out('Molecular weight', 'g/mol'),
    },
  },
  'number-density': {
    title: 'Number density and mixing ratio',
    description: 'Molecules per cm³ of air at a temperature and pressure, and of a trace gas from its mixing ratio (or the reverse).',
    outputs: {
      airNumberDensity_perCm3: out('Number density of air', 'molecules/cm³'),
      numberDensity_perCm3: out('Number density', 'molecules/cm³'),
      mixingRatio_ppb: out('Mixing ratio in ppb', 'ppb'),
    },
  },
  'chemical-lifetime': {
    title: 'Chemical lifetime against an oxidant',
    description: 'First-order lifetime of a gas from its rate constant with an oxidant (OH, O3, NO3 ...) and the oxidant’s number density.',
    outputs: {
      airNumberDensity_perCm3: out('Number density of air', 'molecules/cm³'),
      oxidantNumberDensity_perCm3: out('Oxidant number density, [X]', 'molecules/cm³'),
      lifetime_s: out('Lifetime against the oxidant, τ', 's'),
      lifetime_days: out('Lifetime in days', 'days'),
      lifetime_years: out('Lifetime in years', 'years'),
    },
  },
  'analyzer-checks': {
    title: 'Analyzer calibration checks (Method 7E)',
    description: 'Calibration error, system bias and drift against their limits, and the bias-corrected run average.',
    outputs: {
      calibrationError_pct: out('Calibration error, one per gas', '% of span'),
      calibrationErrorPass: out('Every calibration error within ±2.0 % of span or 0.5 ppmv', ''),
      zeroBiasPre_pct: out('System bias, zero gas, before the run', '% of span'),
      zeroBiasPrePass: out('Zero bias before the run within limits', ''),
      zeroBiasPost_pct: out('System bias, zero gas, after the run', '% of span'),
      zeroBiasPostPass: out('Zero bias after the run within limits', ''),
      zeroDrift_pct: out('Drift, zero gas', '% of span'),
      zeroDriftPass: out('Zero drift within limits', ''),
      upscaleBiasPre_pct: out('System bias, upscale gas, before the run', '% of span'),
      upscaleBiasPrePass: out('Upscale bias before the run within limits', ''),
      upscaleBiasPost_pct: out('System bias, upscale gas, after the run', '% of span'),
      upscaleBiasPostPass: out('Upscale bias after the run within limits', ''),
      upscaleDrift_pct: out('Drift, upscale gas', '% of span'),
      upscaleDriftPass: out('Upscale drift within limits', ''),
      zeroResponseAverage: out('Average of the pre- and post-run zero system responses, C0', 'ppmv'),
      upscaleResponseAverage: out('Average of the pre- and post-run upscale system responses, CM', 'ppmv'),
      biasCorrectedAverage: out('Run average corrected for bias, C_gas', 'ppmv'),
      allChecksPass: out('Calibration error, system bias and drift all within limits', ''),
    },
  },
  'relative-accuracy': {
    title: 'Relative accuracy test audit (PS-2)',
    description: 'Relative accuracy of a monitor against reference method runs, with the bias test and bias adjustment factor.',
    outputs: {
      runCount: out('Number of runs, n', ''),
      differences: out('Differences RM − CEMS, one per run', sameAsRuns),
      meanDifference: out('Mean difference, d̄', sameAsRuns),
      stdDevDifference: out('Standard deviation of the differences, Sd', sameAsRuns),
      tValue: out('t0.975', ''),
      confidenceCoefficient: out('2.5 % error confidence coefficient, CC', sameAsRuns),
      meanReference: out('Mean of the reference method values', sameAsRuns),
      relativeAccuracy_pct: out('Relative accuracy, RA', '%'),
      biasDetected: out('Bias detected (the monitor reads low)', ''),
      meanMonitor: out('Mean of the monitor values', sameAsRuns),
      biasAdjustmentFactor: out('Bias adjustment factor, BAF', ''),
    },
  },
};

function collectInputs(schema: z.ZodType, prefix: string, into: Record<string, InputMeta>, required: boolean): void {
  if (!(schema instanceof z.ZodObject)) return;
  for (const [key, field] of Object.entries(schema.shape as Record<string, z.ZodType>)) {
    const path = prefix ? `${prefix}.${key}` : key;
    const meta = (field.meta() ?? {}) as Partial<FieldMeta>;
    const entry: InputMeta = {
      label: meta.label ?? key,
      unit: meta.unit ?? '',
      required: required && !(field instanceof z.ZodOptional) && !(field instanceof z.ZodDefault),
    };
    if (meta.description) entry.description = meta.description;
    if (meta.options) entry.options = meta.options;
    if (field instanceof z.ZodDefault) entry.default = field.def.defaultValue;
    into[path] = entry;

    let inner: z.ZodType = field;
    if (inner instanceof z.ZodOptional || inner instanceof z.ZodDefault) inner = inner.unwrap() as z.ZodType;
    if (inner instanceof z.ZodArray) collectInputs(inner.element as z.ZodType, `${path}[]`, into, entry.required);
    else collectInputs(inner, path, into, entry.required);
  }
}

function buildMeta(): Record<CalculationId, CalculationMeta> {
  const meta = {} as Record<CalculationId, CalculationMeta>;
  for (const id of calculationIds) {
    const inputs: Record<string, InputMeta> = {};
    collectInputs(calculationSchemas[id], '', inputs, true);
    meta[id] = { ...described[id], inputs };
  }
  return meta;
}

export const calculationMeta: Readonly<Record<CalculationId, CalculationMeta>> = buildMeta();
