/** Bad input ends in an InputError that names every bad field in a plain sentence. */
import { describe, expect, it } from 'vitest';
import { calculate, InputError, type CalculationId } from '../../../server/engine';
import { examples } from './examples';

function problems(id: CalculationId, inputs: unknown, options?: Parameters<typeof calculate>[2]) {
  try {
    calculate(id, inputs, options);
  } catch (error) {
    expect(error).toBeInstanceOf(InputError);
    const fields = (error as InputError).fields;
    expect(fields.length).toBeGreaterThan(0);
    expect((error as InputError).cause).toBeUndefined();
    for (const f of fields) {
      // The sentence names its field and says what is wanted, in our words, not zod's.
      expect(f.message.startsWith(f.field)).toBe(true);
      expect(f.message).not.toMatch(/Invalid input|expected (number|string|array|object)|received/);
    }
    return fields;
  }
  throw new Error(`calculate('${id}') accepted bad input`);
}
const fieldsOf = (id: CalculationId, inputs: unknown) => problems(id, inputs).map((p) => p.field).sort();
const messageFor = (id: CalculationId, inputs: unknown, field: string) =>
  problems(id, inputs).find((p) => p.field === field)?.message;

describe('type errors: strings, NaN, Infinity, null, missing', () => {
  const flow = examples['stack-flow'];
  it('a string temperature: "stackTemp_F must be a number between -40 and 2500, ..." (ENGINE.md wording)', () => {
    expect(messageFor('isokinetic', { ...examples.isokinetic, stackTemp_F: '285' }, 'stackTemp_F')).toBe(
      'stackTemp_F must be a number between -40 and 2500',
    );
  });
  for (const bad of [NaN, Infinity, -Infinity, '29.9', null, true, {}, [29.9]]) {
    it(`barometric_inHg = ${typeof bad === 'number' ? String(bad) : JSON.stringify(bad)} is named`, () => {
      expect(fieldsOf('stack-flow', { ...flow, barometric_inHg: bad })).toEqual(['barometric_inHg']);
    });
  }
  it('a missing field says it is missing', () => {
    const { dryMolecularWeight: _omit, ...rest } = flow;
    expect(messageFor('stack-flow', rest, 'dryMolecularWeight')).toMatch(/^dryMolecularWeight is missing; it must be a number/);
  });
  it('every bad field at once is listed, each once', () => {
    const fields = fieldsOf('stack-flow', {
      ...flow,
      deltaP_inH2O: [0.5, 'x', NaN],
      barometric_inHg: Infinity,
      staticPressure_inH2O: '−0.5',
      moistureFraction: 1,
      pitotCoefficient: null,
    });
    expect(fields).toEqual(['barometric_inHg', 'deltaP_inH2O.1', 'deltaP_inH2O.2', 'moistureFraction', 'pitotCoefficient', 'staticPressure_inH2O']);
  });
  it('inputs that are not an object', () => {
    for (const bad of [null, undefined, 'inputs', 42, [1, 2]]) expect(fieldsOf('moisture', bad)).toEqual(['inputs']);
  });
  it('an unknown field is named (no silent typo)', () => {
    const fields = problems('traverse-points', { ...examples['traverse-points'], portLenght_in: 4 });
    expect(fields).toEqual([
      { field: 'portLenght_in', message: 'portLenght_in is not an input of this calculation; remove it or check its spelling' },
    ]);
  });
  it('an unknown calculation id is field "id"', () => {
    expect(problems('stack-velocity' as CalculationId, {})).toEqual([
      expect.objectContaining({ field: 'id', message: expect.stringMatching(/^id "stack-velocity" is not a calculation/) }),
    ]);
    expect(problems(42 as unknown as CalculationId, {})[0].field).toBe('id');
  });
});

describe('empty arrays', () => {
  it('deltaP_inH2O = [] (stack-flow)', () => {
    expect(messageFor('stack-flow', { ...examples['stack-flow'], deltaP_inH2O: [] }, 'deltaP_inH2O')).toBe(
      'deltaP_inH2O must list at least 1 reading',
    );
  });
  it('stackTemp_F = [] (stack-flow)', () => {
    expect(fieldsOf('stack-flow', { ...examples['stack-flow'], stackTemp_F: [] })).toEqual(['stackTemp_F']);
  });
  it('referenceValues and monitorValues = [] (relative-accuracy)', () => {
    expect(fieldsOf('relative-accuracy', { referenceValues: [], monitorValues: [] })).toEqual(['monitorValues', 'referenceValues']);
  });
  it('calibrationGases = [] (analyzer-checks)', () => {
    expect(fieldsOf('analyzer-checks', { ...examples['analyzer-checks'], calibrationGases: [] })).toEqual(['calibrationGases']);
  });
});

describe('negative or zero absolute pressures and temperatures', () => {
  it('absoluteStackPressure_inHg ≤ 0 (isokinetic, moisture)', () => {
    expect(fieldsOf('isokinetic', { ...examples.isokinetic, absoluteStackPressure_inHg: -29.5 })).toEqual(['absoluteStackPressure_inHg']);
    expect(fieldsOf('isokinetic', { ...examples.isokinetic, absoluteStackPressure_inHg: 0 })).toEqual(['absoluteStackPressure_inHg']);
    expect(fieldsOf('moisture', { ...examples.moisture, absoluteStackPressure_inHg: -1 })).toEqual(['absoluteStackPressure_inHg']);
  });
  it('barometric_inHg negative (stack-flow, moisture)', () => {
    expect(fieldsOf('stack-flow', { ...examples['stack-flow'], barometric_inHg: -29.9 })).toEqual(['barometric_inHg']);
    expect(fieldsOf('moisture', { ...examples.moisture, barometric_inHg: -29.9 })).toEqual(['barometric_inHg']);
  });
  it('pressure_kPa and pressure_hPa of zero or less (ideal-gas calculations)', () => {
    expect(fieldsOf('concentration-conversion', { ...examples['concentration-conversion'], pressure_kPa: 0 })).toEqual(['pressure_kPa']);
    expect(fieldsOf('number-density', { ...examples['number-density'], pressure_hPa: -1013 })).toEqual(['pressure_hPa']);
  });
  it('an absolute temperature of zero (number-density, chemical-lifetime)', () => {
    expect(messageFor('number-density', { ...examples['number-density'], temperature_K: 0 }, 'temperature_K')).toMatch(
      /^temperature_K must be a number above 0/,
    );
    expect(
      fieldsOf('chemical-lifetime', {
        rateConstant_cm3PerMoleculeS: 1e-14,
        oxidantMixingRatio: 40,
        oxidantMixingRatioUnit: 'ppb',
        temperature_K: 0,
        pressure_hPa: 1013,
      }),
    ).toEqual(['temperature_K']);
    expect(fieldsOf('concentration-conversion', { ...examples['concentration-conversion'], temperature_C: -273.15 })).toEqual(['temperature_C']);
  });
});

describe('fractions and O2', () => {
  for (const bws of [1, 1.2, 12, -0.1]) {
    it(`moistureFraction = ${bws} in stack-flow, isokinetic and gas-composition`, () => {
      expect(messageFor('stack-flow', { ...examples['stack-flow'], moistureFraction: bws }, 'moistureFraction')).toMatch(
        /up to but not including 1/,
      );
      expect(fieldsOf('isokinetic', { ...examples.isokinetic, moistureFraction: bws })).toEqual(['moistureFraction']);
      expect(fieldsOf('gas-composition', { ...examples['gas-composition'], moistureFraction: bws })).toEqual(['moistureFraction']);
    });
  }
  for (const o2 of [20.9, 21, 25]) {
    it(`O2 = ${o2} % (measured and reference, diluent-correction; o2Dry_pct, f-factor-rate)`, () => {
      const d = examples['diluent-correction'];
      expect(messageFor('diluent-correction', { ...d, measuredO2_pct: o2 }, 'measuredO2_pct')).toMatch(/20\.9/);
      expect(fieldsOf('diluent-correction', { ...d, referenceO2_pct: o2 })).toEqual(['referenceO2_pct']);
      expect(fieldsOf('diluent-correction', { ...d, referenceO2_pct: o2, measuredO2_pct: o2 })).toEqual(['measuredO2_pct', 'referenceO2_pct']);
      expect(fieldsOf('f-factor-rate', { ...examples['f-factor-rate'], o2Dry_pct: o2 })).toEqual(['o2Dry_pct']);
    });
  }
  it('CO2 + O2 + CO above 100 % names all three', () => {
    expect(fieldsOf('gas-composition', { co2_pct: 60, o2_pct: 45 })).toEqual(['co2_pct', 'co_pct', 'o2_pct']);
  });
});

describe('cross-field rules', () => {
  it('mismatched RATA pairs name both lists', () => {
    const nine = examples['relative-accuracy'].referenceValues;
    const fields = problems('relative-accuracy', { referenceValues: nine, monitorValues: [...nine, 100] });
    expect(fields.map((f) => f.field).sort()).toEqual(['monitorValues', 'referenceValues']);
    expect(fields[0].message).toMatch(/pair/);
  });
  it('fewer than 9 or more than 12 runs', () => {
    const eight = examples['relative-accuracy'].referenceValues.slice(0, 8);
    expect(fieldsOf('relative-accuracy', { referenceValues: eight, monitorValues: eight })).toEqual(['monitorValues', 'referenceValues']);
    const thirteen = Array.from({ length: 13 }, (_, i) => 100 + i);
    expect(fieldsOf('relative-accuracy', { referenceValues: thirteen, monitorValues: thirteen })).toEqual(['monitorValues', 'referenceValues']);
  });
  it('reference values all zero (RA divides by their mean)', () => {
    const zeros = Array(9).fill(0);
    expect(fieldsOf('relative-accuracy', { referenceValues: zeros, monitorValues: zeros })).toEqual(['referenceValues']);
  });
  for (const points of [7, 1, 0, 26, 2.5, -4]) {
    it(`pointsPerDiameter = ${points} (odd, fractional or outside 2–24)`, () => {
      expect(messageFor('traverse-points', { stackDiameter_in: 48, pointsPerDiameter: points }, 'pointsPerDiameter')).toBe(
        'pointsPerDiameter must be an even whole number between 2 and 24 (Method 1, Table 1-2)',
      );
    });
  }
  it('stack-flow needs exactly one of stackDiameter_in and stackArea_ft2', () => {
    const { stackDiameter_in: _d, ...neither } = examples['stack-flow'];
    expect(fieldsOf('stack-flow', neither)).toEqual(['stackArea_ft2', 'stackDiameter_in']);
    expect(fieldsOf('stack-flow', { ...examples['stack-flow'], stackArea_ft2: 12.6 })).toEqual(['stackArea_ft2', 'stackDiameter_in']);
  });
  it('a temperature list must have one value per velocity head', () => {
    expect(messageFor('stack-flow', { ...examples['stack-flow'], stackTemp_F: [285, 290] }, 'stackTemp_F')).toMatch(
      /one temperature per velocity head/,
    );
  });
  it('moisture: stack temperature without stack pressure', () => {
    const { absoluteStackPressure_inHg: _p, ...rest } = examples.moisture;
    expect(fieldsOf('moisture', rest)).toEqual(['absoluteStackPressure_inHg']);
  });
  it('a zero rate constant', () => {
    expect(messageFor('chemical-lifetime', { rateConstant_cm3PerMoleculeS: 0, oxidantNumberDensity_perCm3: 1e6 }, 'rateConstant_cm3PerMoleculeS')).toMatch(
      /zero rate constant/,
    );
  });
  it('a custom pollutant without a molecular weight', () => {
    expect(fieldsOf('mass-emission-rate', { concentration_ppmvd: 10, pollutant: 'custom', dryStdFlow_dscfh: 1e6 })).toEqual(['molecularWeight']);
  });
  it('f-factor-rate: both concentrations, and a fuel together with an Fd', () => {
    expect(
      fieldsOf('f-factor-rate', {
        concentration_ppmvd: 38,
        pollutant: 'NOx',
        concentration_lbPerDscf: 1e-6,
        o2Dry_pct: 3,
        fuel: 'naturalGas',
        fdFactor_dscfPerMMBtu: 8710,
      }),
    ).toEqual(['concentration_lbPerDscf', 'concentration_ppmvd', 'fdFactor_dscfPerMMBtu', 'fuel']);
  });
  it('analyzer-checks: a system bias gas that is not one of the calibration gases', () => {
    const a = examples['analyzer-checks'];
    expect(
      fieldsOf('analyzer-checks', { ...a, systemBias: { ...a.systemBias, upscale: { certified: 45, pre: 44, post: 44 } } }),
    ).toEqual(['systemBias.upscale.certified']);
  });
  it('analyzer-checks: upscale and zero responses averaging the same (Eq. 7E-5b divides by their difference)', () => {
    const a = examples['analyzer-checks'];
    const fields = fieldsOf('analyzer-checks', {
      ...a,
      systemBias: { zero: { certified: 0, pre: 1, post: 1 }, upscale: { certified: 50.2, pre: 1, post: 1 } },
    });
    expect(fields).toEqual(['systemBias.upscale.post', 'systemBias.upscale.pre', 'systemBias.zero.post', 'systemBias.zero.pre']);
  });
  it('number-density: a trace gas denser than the air around it', () => {
    expect(fieldsOf('number-density', { numberDensity_perCm3: 3e19, temperature_K: 298.15, pressure_hPa: 1013.25 })).toEqual([
      'numberDensity_perCm3',
    ]);
  });
});

describe('overrides (carried-forward values)', () => {
  const flow = examples['stack-flow'];
  it('a non-finite or non-number override is named', () => {
    expect(problems('stack-flow', flow, { overrides: { velocity_fps: NaN } }).map((p) => p.field)).toEqual(['overrides.velocity_fps']);
    expect(
      problems('stack-flow', flow, { overrides: { velocity_fps: '52' as unknown as number } }).map((p) => p.field),
    ).toEqual(['overrides.velocity_fps']);
  });
  it('an override that is not a step of the calculation is named', () => {
    expect(problems('stack-flow', flow, { overrides: { velocity: 52 } }).map((p) => p.field)).toEqual(['overrides.velocity']);
  });
  it('an override that makes a later step non-finite is named, not turned into NaN', () => {
    expect(problems('stack-flow', flow, { overrides: { absoluteStackPressure_inHg: 0 } }).map((p) => p.field)).toEqual([
      'overrides.absoluteStackPressure_inHg',
    ]);
    expect(problems('stack-flow', flow, { overrides: { wetMolecularWeight: -28 } }).map((p) => p.field)).toEqual([
      'overrides.wetMolecularWeight',
    ]);
  });
});
