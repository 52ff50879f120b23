/** Ideal-gas conversions for ambient and source work: ppmv ⇄ mg/m³, number density, chemical lifetime. */
import { mixingRatioParts, type MixingRatioUnit } from '../../shared/calculations/choices';
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { celsiusToKelvin } from '../../shared/units';
import { MOLECULAR_WEIGHT, formulaLatex } from './molecularWeights';
import { fmt, type StepSpec, type Worksheet } from './worksheet';
import { inputError } from './errors';

/** Boltzmann constant, J/K (CODATA 2018, exact since the 2019 SI). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;
/** Avogadro constant, 1/mol (CODATA 2018, exact since the 2019 SI). */
export const AVOGADRO_PER_MOL = 6.02214076e23;
/** Molar gas constant R = NA·kB = 8.314462618… J/(mol·K) (CODATA 2018, exact). */
export const GAS_CONSTANT_J_PER_MOL_K = AVOGADRO_PER_MOL * BOLTZMANN_J_PER_K;
const PASCALS_PER_HECTOPASCAL = 100;
const CUBIC_CM_PER_CUBIC_M = 1e6;
const SECONDS_PER_DAY = 86400;
/** Julian year (IAU): 365.25 days. */
const DAYS_PER_YEAR = 365.25;

const MOLAR_VOLUME_STEP: StepSpec = {
  key: 'molarVolume_L',
  label: 'Molar volume of an ideal gas',
  equation: String.raw`V_m = \frac{R\,T}{P} = \frac{8.314462618\,(t + 273.15)}{P\,[\text{kPa}]}`,
  unit: 'L/mol',
  source: 'Ideal gas law; R from CODATA 2018 (exact)',
  inputs: ['temperature_C', 'pressure_kPa'],
};

export function concentrationConversion(input: CalculationInputParsed<'concentration-conversion'>, w: Worksheet) {
  let mw: number;
  if (input.pollutant !== undefined) {
    mw = w.number(
      {
        key: 'molecularWeight',
        label: `Molecular weight of ${input.pollutant}`,
        equation: String.raw`MW = ${formulaLatex(input.pollutant)}`,
        unit: 'g/mol',
        source: 'IUPAC standard atomic weights',
        inputs: ['pollutant'],
      },
      MOLECULAR_WEIGHT[input.pollutant],
    );
  } else {
    mw = input.molecularWeight as number;
  }
  const vm = w.number(
    MOLAR_VOLUME_STEP,
    (GAS_CONSTANT_J_PER_MOL_K * celsiusToKelvin(input.temperature_C)) / input.pressure_kPa,
  );
  const mwDepends = input.pollutant !== undefined ? ['molecularWeight'] : [];
  const mwInputs = input.pollutant !== undefined ? [] : ['molecularWeight'];
  let ppmv: number;
  let mgPerM3: number;
  if (input.from === 'ppmv') {
    ppmv = input.value;
    mgPerM3 = w.number(
      {
        key: 'mgPerM3',
        label: 'Mass concentration',
        equation: String.raw`c = \frac{C_{ppmv}\,MW}{V_m}`,
        unit: 'mg/m³',
        source: 'Ideal gas law',
        dependsOn: [...mwDepends, 'molarVolume_L'],
        inputs: ['value', ...mwInputs],
      },
      (input.value * mw) / vm,
    );
  } else {
    mgPerM3 = input.value;
    ppmv = w.number(
      {
        key: 'ppmv',
        label: 'Volume mixing ratio',
        equation: String.raw`C_{ppmv} = \frac{c\,V_m}{MW}`,
        unit: 'ppmv',
        source: 'Ideal gas law',
        dependsOn: [...mwDepends, 'molarVolume_L'],
        inputs: ['value', ...mwInputs],
      },
      (input.value * vm) / mw,
    );
    if (ppmv > 1e6) {
      throw inputError('value', `is more than the whole gas at ${fmt(input.temperature_C)} °C and ${fmt(input.pressure_kPa)} kPa (${fmt(ppmv)} ppmv); check the value and molecular weight`);
    }
  }
  return { ppmv, mgPerM3, molarVolume_L: vm, molecularWeight: mw };
}

function airDensityStep(inputs: string[]): StepSpec {
  return {
    key: 'airNumberDensity_perCm3',
    label: 'Number density of air',
    equation: String.raw`n_{air} = \frac{P}{k_B\,T} = \frac{100\,P\,[\text{hPa}]}{1.380649\times10^{-23}\,T} \times 10^{-6}`,
    unit: 'molecules/cm³',
    source: 'Ideal gas law; kB from CODATA 2018 (exact)',
    inputs,
  };
}

function airNumberDensity(pressure_hPa: number, temperature_K: number): number {
  return (pressure_hPa * PASCALS_PER_HECTOPASCAL) / (BOLTZMANN_J_PER_K * temperature_K) / CUBIC_CM_PER_CUBIC_M;
}

export function numberDensity(input: CalculationInputParsed<'number-density'>, w: Worksheet) {
  const nAir = w.number(
    airDensityStep(['pressure_hPa', 'temperature_K']),
    airNumberDensity(input.pressure_hPa, input.temperature_K),
  );
  let n: number;
  let ppb: number;
  if (input.mixingRatio !== undefined) {
    const fraction = input.mixingRatio / mixingRatioParts[input.mixingRatioUnit as MixingRatioUnit];
    n = w.number(
      {
        key: 'numberDensity_perCm3',
        label: 'Number density',
        equation: String.raw`n = \chi\,n_{air}`,
        unit: 'molecules/cm³',
        source: 'Definition of mixing ratio',
        dependsOn: ['airNumberDensity_perCm3'],
        inputs: ['mixingRatio'],
      },
      fraction * nAir,
    );
    ppb = w.number(
      {
        key: 'mixingRatio_ppb',
        label: 'Mixing ratio in ppb',
        equation: String.raw`\chi\,[\text{ppb}] = 10^{9}\,\chi`,
        unit: 'ppb',
        source: 'Unit conversion',
        inputs: ['mixingRatio', 'mixingRatioUnit'],
      },
      fraction * mixingRatioParts.ppb,
    );
  } else {
    n = input.numberDensity_perCm3 as number;
    ppb = w.number(
      {
        key: 'mixingRatio_ppb',
        label: 'Mixing ratio in ppb',
        equation: String.raw`\chi\,[\text{ppb}] = 10^{9}\,\frac{n}{n_{air}}`,
        unit: 'ppb',
        source: 'Definition of mixing ratio',
        dependsOn: ['airNumberDensity_perCm3'],
        inputs: ['numberDensity_perCm3'],
      },
      (n / nAir) * mixingRatioParts.ppb,
    );
    if (n > nAir) {
      throw inputError('numberDensity_perCm3', `must not exceed the number density of air at this temperature and pressure (${fmt(nAir)} molecules/cm³)`);
    }
  }
  return { airNumberDensity_perCm3: nAir, numberDensity_perCm3: n, mixingRatio_ppb: ppb };
}

export function chemicalLifetime(input: CalculationInputParsed<'chemical-lifetime'>, w: Worksheet) {
  const results: Record<string, number> = {};
  let oxidant: number;
  let oxidantDepends: string[] = [];
  let oxidantInputs: string[] = ['oxidantNumberDensity_perCm3'];
  if (input.oxidantMixingRatio !== undefined) {
    const nAir = w.number(
      airDensityStep(['pressure_hPa', 'temperature_K']),
      airNumberDensity(input.pressure_hPa as number, input.temperature_K as number),
    );
    oxidant = w.number(
      {
        key: 'oxidantNumberDensity_perCm3',
        label: 'Oxidant number density, [X]',
        equation: String.raw`[X] = \chi_X\,n_{air}`,
        unit: 'molecules/cm³',
        source: 'Definition of mixing ratio',
        dependsOn: ['airNumberDensity_perCm3'],
        inputs: ['oxidantMixingRatio', 'oxidantMixingRatioUnit'],
      },
      (input.oxidantMixingRatio / mixingRatioParts[input.oxidantMixingRatioUnit as MixingRatioUnit]) * nAir,
    );
    results.airNumberDensity_perCm3 = nAir;
    oxidantDepends = ['oxidantNumberDensity_perCm3'];
    oxidantInputs = [];
  } else {
    oxidant = input.oxidantNumberDensity_perCm3 as number;
  }
  results.oxidantNumberDensity_perCm3 = oxidant;
  const seconds = w.number(
    {
      key: 'lifetime_s',
      label: 'Lifetime against the oxidant, τ',
      equation: String.raw`\tau = \frac{1}{k\,[X]}`,
      unit: 's',
      source: 'First-order loss (pseudo-first-order rate k[X])',
      dependsOn: oxidantDepends,
      inputs: ['rateConstant_cm3PerMoleculeS', ...oxidantInputs],
    },
    1 / (input.rateConstant_cm3PerMoleculeS * oxidant),
  );
  const days = w.number(
    {
      key: 'lifetime_days',
      label: 'Lifetime in days',
      equation: String.raw`\tau / 86400`,
      unit: 'days',
      source: 'Unit conversion (86400 s/day)',
      dependsOn: ['lifetime_s'],
    },
    seconds / SECONDS_PER_DAY,
  );
  const years = w.number(
    {
      key: 'lifetime_years',
      label: 'Lifetime in years',
      equation: String.raw`\tau / (365.25 \times 86400)`,
      unit: 'years',
      source: 'Unit conversion (365.25-day year)',
      dependsOn: ['lifetime_s'],
    },
    seconds / (SECONDS_PER_DAY * DAYS_PER_YEAR),
  );
  results.lifetime_s = seconds;
  results.lifetime_days = days;
  results.lifetime_years = years;
  return results;
}
