/**
 * One input schema per calculation. The same schema validates the HTTP route (via the engine),
 * drives the client's forms, and becomes JSON Schema with `z.toJSONSchema(schema, { io: 'input' })`.
 * Cross-field rules are `superRefine`s: zod runs them once every field has the right type (ranges
 * may still be off, see `valid`), and JSON Schema leaves them out.
 */
import { z } from 'zod';
import type { CalculationId } from './ids';
import {
  concentrationUnits,
  fuels,
  gasPollutants,
  massRatePollutants,
  mixingRatioParts,
  mixingRatioUnits,
} from './choices';
import { AMBIENT_O2_PCT } from './limits';
import {
  choiceField,
  defaultedNumberField,
  formatLimit,
  groupSchema,
  inputsObject,
  listField,
  listSchema,
  numberField,
  numberListField,
  numberSchema,
  optionalChoiceField,
  optionalNumberField,
  rangePhrase,
  type NumberFieldSpec,
} from './fields';

type Ctx = z.RefinementCtx;

function problem(ctx: Ctx, field: string | (string | number)[], message: string): void {
  ctx.addIssue({ code: 'custom', path: Array.isArray(field) ? field : [field], message });
}

/**
 * True when none of these fields has a problem yet. Zod runs these rules even when a field is
 * out of range, so each rule first checks that the fields it speaks about are individually valid.
 */
function valid(ctx: Ctx, ...fields: string[]): boolean {
  return !ctx.issues.some((issue) => issue.path !== undefined && issue.path.length > 0 && fields.includes(String(issue.path[0])));
}

/** Exactly one of two alternative fields must be given. */
function exactlyOne(ctx: Ctx, data: Record<string, unknown>, a: string, b: string): void {
  if (!valid(ctx, a, b)) return;
  const hasA = data[a] !== undefined;
  const hasB = data[b] !== undefined;
  if (!hasA && !hasB) {
    problem(ctx, a, `is missing; give either ${a} or ${b}`);
    problem(ctx, b, `is missing; give either ${a} or ${b}`);
  } else if (hasA && hasB) {
    problem(ctx, a, `cannot be given together with ${b}; give only one of them`);
    problem(ctx, b, `cannot be given together with ${a}; give only one of them`);
  }
}

function requiredWith(ctx: Ctx, data: Record<string, unknown>, field: string, because: string): void {
  if (data[field] === undefined) problem(ctx, field, `is missing; it is needed ${because}`);
}

function notWith(ctx: Ctx, data: Record<string, unknown>, field: string, because: string): void {
  if (data[field] !== undefined) problem(ctx, field, `does not apply ${because}; leave it out`);
}

// ---------------------------------------------------------------------------------------------
// Field specs used by more than one calculation

const stackTempSpec: NumberFieldSpec = { label: 'Stack temperature', unit: '°F', min: -40, max: 2500 };
const barometricSpec: NumberFieldSpec = { label: 'Barometric pressure', unit: 'in. Hg', min: 15, max: 35 };
const absoluteStackPressureSpec: NumberFieldSpec = {
  label: 'Absolute stack pressure',
  unit: 'in. Hg',
  min: 0,
  max: 60,
  minExclusive: true,
};
const moistureFractionSpec: NumberFieldSpec = {
  label: 'Moisture fraction, Bws',
  unit: '',
  min: 0,
  max: 1,
  maxExclusive: true,
  hint: 'a fraction of the gas by volume, e.g. 0.12 for 12 % water vapor',
};
const meterVolumeStdSpec: NumberFieldSpec = {
  label: 'Sample volume at standard conditions, Vm(std)',
  unit: 'dscf',
  min: 0,
  max: 2000,
  minExclusive: true,
};
const dryStdFlowSpec: NumberFieldSpec = {
  label: 'Dry standard flow rate, Qsd',
  unit: 'dscf/hr',
  min: 0,
  max: 1e10,
  minExclusive: true,
};
const stackDiameterSpec: NumberFieldSpec = {
  label: 'Stack inside diameter',
  unit: 'in.',
  min: 2,
  max: 1200,
};
const molecularWeightSpec: NumberFieldSpec = {
  label: 'Molecular weight',
  unit: 'g/mol',
  min: 1,
  max: 1000,
};
const ppmvdSpec: NumberFieldSpec = { label: 'Concentration, dry basis', unit: 'ppmvd', min: 0, max: 1e6 };
const o2Hint = `${AMBIENT_O2_PCT} % O2 is ambient air, where the O2 correction divides by zero`;
const o2Spec = (label: string): NumberFieldSpec => ({
  label,
  unit: '% O2',
  min: 0,
  max: AMBIENT_O2_PCT,
  maxExclusive: true,
  hint: o2Hint,
});
const temperatureKSpec: NumberFieldSpec = {
  label: 'Temperature',
  unit: 'K',
  min: 0,
  max: 3000,
  minExclusive: true,
  hint: 'an absolute temperature',
};
const pressureHPaSpec: NumberFieldSpec = {
  label: 'Pressure',
  unit: 'hPa',
  min: 0,
  max: 10000,
  minExclusive: true,
  hint: 'an absolute pressure',
};
const concentrationResponseSpec = (label: string): NumberFieldSpec => ({
  label,
  unit: 'ppmv',
  min: -1e6,
  max: 1e6,
});
const certifiedSpec: NumberFieldSpec = { label: 'Certified concentration', unit: 'ppmv', min: 0, max: 1e6 };

// ---------------------------------------------------------------------------------------------

export const traversePointsSchema = inputsObject({
  stackDiameter_in: numberField(stackDiameterSpec),
  pointsPerDiameter: numberField({
    label: 'Traverse points per diameter',
    unit: 'points',
    min: 2,
    max: 24,
    even: true,
    hint: 'Method 1, Table 1-2',
  }),
  portLength_in: defaultedNumberField(
    {
      label: 'Port length (outer end of the port to the inside wall)',
      unit: 'in.',
      min: 0,
      max: 240,
    },
    0,
  ),
});

export const gasCompositionSchema = inputsObject({
  co2_pct: numberField({ label: 'CO2, dry basis', unit: '%', min: 0, max: 100 }),
  o2_pct: numberField({ label: 'O2, dry basis', unit: '%', min: 0, max: 100 }),
  co_pct: defaultedNumberField({ label: 'CO, dry basis', unit: '%', min: 0, max: 100 }, 0),
  moistureFraction: optionalNumberField(moistureFractionSpec),
}).superRefine((d, ctx) => {
  const sum = d.co2_pct + d.o2_pct + d.co_pct;
  if (sum > 100 && valid(ctx, 'co2_pct', 'o2_pct', 'co_pct')) {
    const message = `together with the other gases must not exceed 100 %; co2_pct + o2_pct + co_pct = ${formatLimit(sum)} %`;
    for (const f of ['co2_pct', 'o2_pct', 'co_pct']) problem(ctx, f, message);
  }
});

export const moistureSchema = inputsObject({
  condensateGain_ml: numberField({
    label: 'Impinger condensate gain, Vlc',
    unit: 'ml',
    min: 0,
    max: 5000,
  }),
  silicaGelGain_g: defaultedNumberField({ label: 'Silica gel weight gain, Wsg', unit: 'g', min: 0, max: 2000 }, 0),
  meterVolume_ft3: numberField({
    label: 'Dry gas meter volume, Vm',
    unit: 'ft³',
    min: 0,
    max: 1000,
    minExclusive: true,
  }),
  meterFactorY: numberField({ label: 'Dry gas meter calibration factor, Y', unit: '', min: 0.5, max: 1.5 }),
  barometric_inHg: numberField(barometricSpec),
  orificePressure_inH2O: numberField({
    label: 'Average orifice pressure differential, ΔH',
    unit: 'in. H2O',
    min: 0,
    max: 30,
  }),
  meterTemp_F: numberField({ label: 'Average dry gas meter temperature', unit: '°F', min: -40, max: 300 }),
  stackTemp_F: optionalNumberField(stackTempSpec),
  absoluteStackPressure_inHg: optionalNumberField(absoluteStackPressureSpec),
}).superRefine((d, ctx) => {
  const why = 'to find the saturation moisture at stack conditions';
  if (d.stackTemp_F !== undefined) requiredWith(ctx, d, 'absoluteStackPressure_inHg', `with stackTemp_F ${why}`);
  if (d.absoluteStackPressure_inHg !== undefined) requiredWith(ctx, d, 'stackTemp_F', `with absoluteStackPressure_inHg ${why}`);
});

const stackTempListMessage = `must be ${rangePhrase(stackTempSpec)}, or a list of 1 to 100 such numbers (one per traverse point)`;

export const stackFlowSchema = inputsObject({
  deltaP_inH2O: numberListField(
    { label: 'Velocity head, Δp', unit: 'in. H2O', min: 0, max: 25 },
    {
      label: 'Velocity heads, one per traverse point',
      unit: 'in. H2O',
      minItems: 1,
      maxItems: 100,
      noun: ['reading', 'readings'],
    },
  ),
  stackTemp_F: z
    .union(
      [
        numberSchema(stackTempSpec),
        listSchema(numberSchema(stackTempSpec), {
          ...stackTempSpec,
          minItems: 1,
          maxItems: 100,
          noun: ['reading', 'readings'],
        }),
      ],
      { error: (iss) => (iss.input === undefined ? `is missing; it ${stackTempListMessage}` : stackTempListMessage) },
    )
    .meta({
      label: 'Stack temperature (one value, or one per traverse point)',
      unit: '°F',
    }),
  barometric_inHg: numberField(barometricSpec),
  staticPressure_inH2O: numberField({ label: 'Stack static pressure, Pg', unit: 'in. H2O', min: -100, max: 100 }),
  pitotCoefficient: defaultedNumberField({ label: 'Pitot tube coefficient, Cp', unit: '', min: 0.5, max: 1 }, 0.84),
  dryMolecularWeight: numberField({ label: 'Dry molecular weight, Md', unit: 'lb/lb-mol', min: 20, max: 50 }),
  moistureFraction: numberField(moistureFractionSpec),
  stackDiameter_in: optionalNumberField(stackDiameterSpec),
  stackArea_ft2: optionalNumberField({
    label: 'Stack cross-sectional area',
    unit: 'ft²',
    min: 0,
    max: 10000,
    minExclusive: true,
  }),
}).superRefine((d, ctx) => {
  exactlyOne(ctx, d, 'stackDiameter_in', 'stackArea_ft2');
  if (
    Array.isArray(d.stackTemp_F) &&
    d.stackTemp_F.length !== d.deltaP_inH2O.length &&
    valid(ctx, 'stackTemp_F', 'deltaP_inH2O')
  ) {
    problem(
      ctx,
      'stackTemp_F',
      `must have one temperature per velocity head: deltaP_inH2O has ${d.deltaP_inH2O.length} readings, stackTemp_F has ${d.stackTemp_F.length}`,
    );
  }
});

export const isokineticSchema = inputsObject({
  stackTemp_F: numberField(stackTempSpec),
  meterVolumeStd_dscf: numberField(meterVolumeStdSpec),
  absoluteStackPressure_inHg: numberField(absoluteStackPressureSpec),
  velocity_fps: numberField({
    label: 'Stack gas velocity, vs',
    unit: 'ft/s',
    min: 0,
    max: 500,
    minExclusive: true,
  }),
  nozzleDiameter_in: numberField({ label: 'Nozzle diameter, Dn', unit: 'in.', min: 0.05, max: 2 }),
  sampleTime_min: numberField({
    label: 'Total sampling time, θ',
    unit: 'min',
    min: 0,
    max: 1440,
    minExclusive: true,
  }),
  moistureFraction: numberField(moistureFractionSpec),
});

export const particulateSchema = inputsObject({
  filterCatch_mg: numberField({
    label: 'Total particulate catch, mn (filter and front-half rinse)',
    unit: 'mg',
    min: 0,
    max: 100000,
  }),
  meterVolumeStd_dscf: numberField(meterVolumeStdSpec),
  dryStdFlow_dscfh: optionalNumberField(dryStdFlowSpec),
});

export const massEmissionRateSchema = inputsObject({
  concentration_ppmvd: numberField(ppmvdSpec),
  pollutant: choiceField({ label: 'Pollutant', options: massRatePollutants }),
  molecularWeight: optionalNumberField({ ...molecularWeightSpec, description: 'Only for a custom pollutant.' }),
  dryStdFlow_dscfh: numberField(dryStdFlowSpec),
}).superRefine((d, ctx) => {
  if (d.pollutant === 'custom' && valid(ctx, 'pollutant')) requiredWith(ctx, d, 'molecularWeight', 'for a custom pollutant');
});

export const fFactorRateSchema = inputsObject({
  concentration_lbPerDscf: optionalNumberField({
    label: 'Pollutant concentration, Cd',
    unit: 'lb/dscf',
    min: 0,
    max: 1,
  }),
  concentration_ppmvd: optionalNumberField(ppmvdSpec),
  pollutant: optionalChoiceField({ label: 'Pollutant (with ppmvd)', options: massRatePollutants }),
  molecularWeight: optionalNumberField({ ...molecularWeightSpec, description: 'Only for a custom pollutant.' }),
  o2Dry_pct: optionalNumberField(o2Spec('O2, dry basis')),
  co2Dry_pct: optionalNumberField({
    label: 'CO2, dry basis (for the Fc variant)',
    unit: '% CO2',
    min: 0,
    max: 100,
    minExclusive: true,
  }),
  fuel: optionalChoiceField({ label: 'Fuel (Method 19, Table 19-2)', options: fuels }),
  fdFactor_dscfPerMMBtu: optionalNumberField({
    label: 'Dry F factor, Fd',
    unit: 'dscf/MMBtu',
    min: 1000,
    max: 30000,
  }),
  fcFactor_scfPerMMBtu: optionalNumberField({
    label: 'Carbon F factor, Fc',
    unit: 'scf CO2/MMBtu',
    min: 100,
    max: 5000,
  }),
}).superRefine((d, ctx) => {
  exactlyOne(ctx, d, 'concentration_lbPerDscf', 'concentration_ppmvd');
  if (d.concentration_ppmvd !== undefined) {
    requiredWith(ctx, d, 'pollutant', 'to convert concentration_ppmvd to lb/dscf');
    if (d.pollutant === 'custom') requiredWith(ctx, d, 'molecularWeight', 'for a custom pollutant');
  } else {
    notWith(ctx, d, 'pollutant', 'when the concentration is given in lb/dscf');
  }
  if (d.pollutant !== 'custom') notWith(ctx, d, 'molecularWeight', 'unless the pollutant is custom');
  exactlyOne(ctx, d, 'o2Dry_pct', 'co2Dry_pct');
  if (d.o2Dry_pct !== undefined) {
    exactlyOne(ctx, d, 'fuel', 'fdFactor_dscfPerMMBtu');
    notWith(ctx, d, 'fcFactor_scfPerMMBtu', 'to the O2-based rate (it goes with co2Dry_pct)');
  } else if (d.co2Dry_pct !== undefined) {
    exactlyOne(ctx, d, 'fuel', 'fcFactor_scfPerMMBtu');
    notWith(ctx, d, 'fdFactor_dscfPerMMBtu', 'to the CO2-based rate (it goes with o2Dry_pct)');
  }
});

export const diluentCorrectionSchema = inputsObject({
  concentration: numberField({
    label: 'Measured concentration (any unit; the result is in the same unit)',
    unit: '',
    min: 0,
    max: 1e9,
  }),
  measuredO2_pct: numberField(o2Spec('Measured O2, dry basis')),
  referenceO2_pct: numberField(o2Spec('Reference O2')),
});

export const concentrationConversionSchema = inputsObject({
  value: numberField({ label: 'Value to convert', unit: '', min: 0, max: 1e9 }),
  from: choiceField({ label: 'Unit of the value', options: concentrationUnits }),
  pollutant: optionalChoiceField({ label: 'Gas', options: gasPollutants }),
  molecularWeight: optionalNumberField(molecularWeightSpec),
  temperature_C: defaultedNumberField({ label: 'Temperature', unit: '°C', min: -100, max: 1500 }, 20),
  pressure_kPa: defaultedNumberField(
    { label: 'Pressure', unit: 'kPa', min: 0, max: 10000, minExclusive: true, hint: 'an absolute pressure' },
    101.325,
  ),
}).superRefine((d, ctx) => {
  exactlyOne(ctx, d, 'pollutant', 'molecularWeight');
  if (d.from === 'ppmv' && d.value > 1e6 && valid(ctx, 'value', 'from')) problem(ctx, 'value', 'must be at most 1e6 ppmv (the whole gas)');
});

export const numberDensitySchema = inputsObject({
  mixingRatio: optionalNumberField({ label: 'Mixing ratio', unit: '', min: 0, max: 1e12 }),
  mixingRatioUnit: optionalChoiceField({ label: 'Mixing ratio unit', options: mixingRatioUnits }),
  numberDensity_perCm3: optionalNumberField({
    label: 'Number density',
    unit: 'molecules/cm³',
    min: 0,
    max: 1e21,
  }),
  temperature_K: numberField(temperatureKSpec),
  pressure_hPa: numberField(pressureHPaSpec),
}).superRefine((d, ctx) => {
  exactlyOne(ctx, d, 'mixingRatio', 'numberDensity_perCm3');
  if (d.mixingRatio !== undefined) {
    requiredWith(ctx, d, 'mixingRatioUnit', 'with mixingRatio');
    const unit = d.mixingRatioUnit;
    if (unit !== undefined && d.mixingRatio > mixingRatioParts[unit] && valid(ctx, 'mixingRatio', 'mixingRatioUnit')) {
      problem(ctx, 'mixingRatio', `must be at most ${formatLimit(mixingRatioParts[unit])} ${unit} (the whole gas)`);
    }
  } else {
    notWith(ctx, d, 'mixingRatioUnit', 'without mixingRatio');
  }
});

export const chemicalLifetimeSchema = inputsObject({
  rateConstant_cm3PerMoleculeS: numberField({
    label: 'Rate constant, k',
    unit: 'cm³/(molecule·s)',
    min: 1e-30,
    max: 1e-8,
    zeroMessage: 'must be above zero: with a zero rate constant there is no loss and no finite lifetime',
  }),
  oxidantNumberDensity_perCm3: optionalNumberField({
    label: 'Oxidant number density, [X]',
    unit: 'molecules/cm³',
    min: 0,
    max: 1e21,
    minExclusive: true,
  }),
  oxidantMixingRatio: optionalNumberField({
    label: 'Oxidant mixing ratio',
    unit: '',
    min: 0,
    max: 1e12,
    minExclusive: true,
  }),
  oxidantMixingRatioUnit: optionalChoiceField({ label: 'Oxidant mixing ratio unit', options: mixingRatioUnits }),
  temperature_K: optionalNumberField(temperatureKSpec),
  pressure_hPa: optionalNumberField(pressureHPaSpec),
}).superRefine((d, ctx) => {
  exactlyOne(ctx, d, 'oxidantNumberDensity_perCm3', 'oxidantMixingRatio');
  if (d.oxidantMixingRatio !== undefined) {
    const why = 'to turn oxidantMixingRatio into a number density';
    requiredWith(ctx, d, 'oxidantMixingRatioUnit', why);
    requiredWith(ctx, d, 'temperature_K', why);
    requiredWith(ctx, d, 'pressure_hPa', why);
    const unit = d.oxidantMixingRatioUnit;
    if (
      unit !== undefined &&
      d.oxidantMixingRatio > mixingRatioParts[unit] &&
      valid(ctx, 'oxidantMixingRatio', 'oxidantMixingRatioUnit')
    ) {
      problem(ctx, 'oxidantMixingRatio', `must be at most ${formatLimit(mixingRatioParts[unit])} ${unit} (the whole gas)`);
    }
  } else {
    const why = 'when oxidantNumberDensity_perCm3 is given';
    notWith(ctx, d, 'oxidantMixingRatioUnit', why);
    notWith(ctx, d, 'temperature_K', why);
    notWith(ctx, d, 'pressure_hPa', why);
  }
});

const biasReadingsSchema = (which: string) =>
  groupSchema({
    certified: numberField({ ...certifiedSpec, label: `${which} gas certified concentration` }),
    pre: numberField(concentrationResponseSpec(`${which} system response before the run`)),
    post: numberField(concentrationResponseSpec(`${which} system response after the run`)),
  }).meta({ label: `${which} gas system bias check`, unit: 'ppmv' });

export const analyzerChecksSchema = inputsObject({
  span: numberField({ label: 'Calibration span', unit: 'ppmv', min: 0, max: 1e6, minExclusive: true }),
  calibrationGases: listField(
    groupSchema({
      certified: numberField(certifiedSpec),
      directResponse: numberField(concentrationResponseSpec('Analyzer direct response')),
    }).meta({ label: 'Calibration gas', unit: 'ppmv' }),
    {
      label: 'Calibration gases (zero, mid, high)',
      unit: 'ppmv',
      minItems: 3,
      maxItems: 10,
      noun: ['gas', 'gases'],
    },
  ),
  systemBias: groupSchema({ zero: biasReadingsSchema('Zero'), upscale: biasReadingsSchema('Upscale') }).meta({
    label: 'System bias checks',
    unit: 'ppmv',
  }),
  runAverage: numberField(concentrationResponseSpec('Average run concentration, C_avg')),
}).superRefine((d, ctx) => {
  if (!valid(ctx, 'calibrationGases', 'systemBias')) return;
  const certified = d.calibrationGases.map((g) => g.certified);
  for (const which of ['zero', 'upscale'] as const) {
    const value = d.systemBias[which].certified;
    if (!certified.some((c) => c === value)) {
      problem(
        ctx,
        ['systemBias', which, 'certified'],
        `must equal the certified value of one of the calibrationGases (${certified.map(formatLimit).join(', ')}); system bias compares against the direct response to the same gas`,
      );
    }
  }
});

const rataValueSpec: NumberFieldSpec = { label: 'Run value', unit: '', min: 0, max: 1e9 };
const rataList = (label: string) =>
  numberListField(rataValueSpec, {
    label,
    unit: '',
    minItems: 9,
    maxItems: 12,
    noun: ['run', 'runs'],
  });

export const relativeAccuracySchema = inputsObject({
  referenceValues: rataList('Reference method values, one per run'),
  monitorValues: rataList('Monitor (CEMS) values, one per run, in the same order'),
}).superRefine((d, ctx) => {
  if (!valid(ctx, 'referenceValues', 'monitorValues')) return;
  const nr = d.referenceValues.length;
  const nm = d.monitorValues.length;
  if (nr !== nm) {
    problem(ctx, 'referenceValues', `has ${nr} runs but monitorValues has ${nm}; every run needs a pair of values`);
    problem(ctx, 'monitorValues', `has ${nm} runs but referenceValues has ${nr}; every run needs a pair of values`);
    return;
  }
  if (d.referenceValues.every((v) => v === 0)) {
    problem(ctx, 'referenceValues', 'must not all be zero: relative accuracy divides by their mean');
  }
});

export const calculationSchemas = {
  'traverse-points': traversePointsSchema,
  'gas-composition': gasCompositionSchema,
  moisture: moistureSchema,
  'stack-flow': stackFlowSchema,
  isokinetic: isokineticSchema,
  particulate: particulateSchema,
  'mass-emission-rate': massEmissionRateSchema,
  'f-factor-rate': fFactorRateSchema,
  'diluent-correction': diluentCorrectionSchema,
  'concentration-conversion': concentrationConversionSchema,
  'number-density': numberDensitySchema,
  'chemical-lifetime': chemicalLifetimeSchema,
  'analyzer-checks': analyzerChecksSchema,
  'relative-accuracy': relativeAccuracySchema,
} as const satisfies Record<CalculationId, z.ZodType>;

export type CalculationSchemas = typeof calculationSchemas;
/** What a caller may send (defaults optional). */
export type CalculationInput<I extends CalculationId> = z.input<CalculationSchemas[I]>;
/** What the engine works with after validation (defaults filled in). */
export type CalculationInputParsed<I extends CalculationId> = z.output<CalculationSchemas[I]>;
