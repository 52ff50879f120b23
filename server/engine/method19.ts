/**
 * Method 19 (40 CFR Part 60, App. A-7) and Part 75 App. F: ppm to lb/scf, mass emission rates,
 * and F-factor emission rates in lb/MMBtu.
 */
import type { Fuel, MassRatePollutant } from '../../shared/calculations/choices';
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { KILOGRAMS_PER_POUND } from '../../shared/units';
import { AMBIENT_O2_PCT } from './constants';
import { MOLECULAR_WEIGHT } from './molecularWeights';
import type { StepSpec, Worksheet } from './worksheet';

/** lb/scf per ppm, published (Part 75, App. F, Table 1; Method 19, Table 19-1). */
const PUBLISHED_LB_PER_SCF_PER_PPM: Partial<Record<MassRatePollutant, number>> = {
  SO2: 1.66e-7,
  NOx: 1.194e-7,
};
/** Molar volume of an ideal gas at 68 °F and 29.92 in. Hg, scf/lb-mol (Method 19 and Part 75 App. F basis). */
export const MOLAR_VOLUME_SCF_PER_LB_MOL = 385.3;
const PPM = 1e6;
/** 365 days × 24 h (ENGINE.md: annual rate at continuous operation). */
const HOURS_PER_YEAR = 8760;
const POUNDS_PER_SHORT_TON = 2000;
/** CO2 in the Fc form: E = Cd Fc 100/%CO2d (Method 19, Eq. 19-6; equation number from memory, check against the method text). */
const PERCENT = 100;

/**
 * Method 19, Table 19-2, dry-basis F factors (from memory, confirm every value against the table):
 * Fd in dscf/MMBtu and Fc in scf CO2/MMBtu at 68 °F, 29.92 in. Hg.
 */
export const F_FACTORS: Readonly<Record<Fuel, { fd: number; fc: number }>> = {
  naturalGas: { fd: 8710, fc: 1040 },
  propane: { fd: 8710, fc: 1190 },
  butane: { fd: 8710, fc: 1250 },
  residualOil: { fd: 9190, fc: 1420 },
  distillateOil: { fd: 9190, fc: 1420 },
  anthracite: { fd: 10100, fc: 1970 },
  bituminousCoal: { fd: 9780, fc: 1800 },
  subbituminousCoal: { fd: 9820, fc: 1840 },
  lignite: { fd: 9860, fc: 1910 },
  wood: { fd: 9240, fc: 1830 },
  woodBark: { fd: 9600, fc: 1860 },
  municipalSolidWaste: { fd: 9570, fc: 1820 },
};

function conversionFactorStep(pollutant: MassRatePollutant, inputs: string[]): StepSpec {
  const published = PUBLISHED_LB_PER_SCF_PER_PPM[pollutant] !== undefined;
  return {
    key: 'conversionFactor_lbPerScfPpm',
    label: `Conversion factor, ppm ${pollutant === 'custom' ? '' : pollutant + ' '}to lb/scf`,
    equation: published
      ? String.raw`K = ${pollutant === 'SO2' ? '1.660' : '1.194'} \times 10^{-7}`
      : String.raw`K = \frac{MW}{385.3 \times 10^{6}}`,
    unit: 'lb/scf per ppm',
    source: published
      ? 'Part 75, App. F, Table 1; Method 19, Table 19-1'
      : 'Ideal gas at 68 °F and 29.92 in. Hg (385.3 scf/lb-mol, Method 19)',
    inputs,
  };
}

function conversionFactor(pollutant: MassRatePollutant, molecularWeight: number | undefined): number {
  const published = PUBLISHED_LB_PER_SCF_PER_PPM[pollutant];
  if (published !== undefined) return published;
  const mw = pollutant === 'CO' ? MOLECULAR_WEIGHT.CO : (molecularWeight as number);
  return mw / (MOLAR_VOLUME_SCF_PER_LB_MOL * PPM);
}

const CONCENTRATION_STEP: StepSpec = {
  key: 'concentration_lbPerDscf',
  label: 'Concentration, lb/dscf',
  equation: String.raw`C_d = K\,C_{ppm}`,
  unit: 'lb/dscf',
  source: 'Part 75, App. F; Method 19, Table 19-1',
  dependsOn: ['conversionFactor_lbPerScfPpm'],
  inputs: ['concentration_ppmvd'],
};
const LB_HR_STEP: StepSpec = {
  key: 'emissionRate_lbPerHr',
  label: 'Mass emission rate',
  equation: String.raw`E = C_d\,Q_{sd}`,
  unit: 'lb/hr',
  source: 'Part 75, App. F (E = K C Q)',
  dependsOn: ['concentration_lbPerDscf'],
  inputs: ['dryStdFlow_dscfh'],
};
const KG_HR_STEP: StepSpec = {
  key: 'emissionRate_kgPerHr',
  label: 'Mass emission rate, metric',
  equation: String.raw`E\,[\text{kg/hr}] = 0.45359237\,E\,[\text{lb/hr}]`,
  unit: 'kg/hr',
  source: 'Unit conversion (1 lb = 0.45359237 kg, exact)',
  dependsOn: ['emissionRate_lbPerHr'],
};
const TPY_STEP: StepSpec = {
  key: 'emissionRate_tonsPerYear',
  label: 'Annual emissions at continuous operation',
  equation: String.raw`E\,[\text{tons/yr}] = \frac{8760\,E\,[\text{lb/hr}]}{2000}`,
  unit: 'tons/yr',
  source: 'Unit conversion (8760 h/yr, 2000 lb per short ton)',
  dependsOn: ['emissionRate_lbPerHr'],
};

export function massEmissionRate(input: CalculationInputParsed<'mass-emission-rate'>, w: Worksheet) {
  const pollutant = input.pollutant;
  if (pollutant !== 'custom' && input.molecularWeight !== undefined) {
    w.warn(
      `molecularWeight is ignored for ${pollutant}: the ${pollutant === 'CO' ? 'molecular weight from IUPAC atomic weights' : 'published conversion factor'} is used.`,
    );
  }
  const k = w.number(
    conversionFactorStep(pollutant, pollutant === 'custom' ? ['molecularWeight'] : []),
    conversionFactor(pollutant, input.molecularWeight),
  );
  const cd = w.number(CONCENTRATION_STEP, k * input.concentration_ppmvd);
  const lbHr = w.number(LB_HR_STEP, cd * input.dryStdFlow_dscfh);
  const kgHr = w.number(KG_HR_STEP, lbHr * KILOGRAMS_PER_POUND);
  const tpy = w.number(TPY_STEP, (lbHr * HOURS_PER_YEAR) / POUNDS_PER_SHORT_TON);
  return {
    conversionFactor_lbPerScfPpm: k,
    concentration_lbPerDscf: cd,
    emissionRate_lbPerHr: lbHr,
    emissionRate_kgPerHr: kgHr,
    emissionRate_tonsPerYear: tpy,
  };
}

const FD_TABLE_STEP: StepSpec = {
  key: 'fdFactor_dscfPerMMBtu',
  label: 'Dry F factor, Fd',
  equation: String.raw`F_d\ \text{(Table 19-2)}`,
  unit: 'dscf/MMBtu',
  source: 'Method 19, Table 19-2',
};
const FD_GIVEN_STEP: StepSpec = { ...FD_TABLE_STEP, equation: String.raw`F_d\ \text{(given)}`, source: 'Given', inputs: ['fdFactor_dscfPerMMBtu'] };
const FC_TABLE_STEP: StepSpec = {
  key: 'fcFactor_scfPerMMBtu',
  label: 'Carbon F factor, Fc',
  equation: String.raw`F_c\ \text{(Table 19-2)}`,
  unit: 'scf CO2/MMBtu',
  source: 'Method 19, Table 19-2',
};
const FC_GIVEN_STEP: StepSpec = { ...FC_TABLE_STEP, equation: String.raw`F_c\ \text{(given)}`, source: 'Given', inputs: ['fcFactor_scfPerMMBtu'] };

export function fFactorRate(input: CalculationInputParsed<'f-factor-rate'>, w: Worksheet) {
  const results: Record<string, number> = {};
  const fromPpm = input.concentration_ppmvd !== undefined;
  let cd: number;
  if (fromPpm) {
    const pollutant = input.pollutant as MassRatePollutant;
    const k = w.number(
      conversionFactorStep(pollutant, pollutant === 'custom' ? ['molecularWeight'] : []),
      conversionFactor(pollutant, input.molecularWeight),
    );
    results.conversionFactor_lbPerScfPpm = k;
    cd = w.number(CONCENTRATION_STEP, k * (input.concentration_ppmvd as number));
  } else {
    cd = input.concentration_lbPerDscf as number;
  }
  results.concentration_lbPerDscf = cd;
  const cdDepends = fromPpm ? ['concentration_lbPerDscf'] : [];
  const cdInputs = fromPpm ? [] : ['concentration_lbPerDscf'];

  if (input.o2Dry_pct !== undefined) {
    const fd =
      input.fuel !== undefined
        ? w.number({ ...FD_TABLE_STEP, inputs: ['fuel'] }, F_FACTORS[input.fuel].fd)
        : w.number(FD_GIVEN_STEP, input.fdFactor_dscfPerMMBtu as number);
    results.fdFactor_dscfPerMMBtu = fd;
    results.emissionRate_lbPerMMBtu = w.number(
      {
        key: 'emissionRate_lbPerMMBtu',
        label: 'Emission rate, O2-based F factor',
        equation: String.raw`E = C_d\,F_d\,\frac{20.9}{20.9 - \%O_{2d}}`,
        unit: 'lb/MMBtu',
        source: 'Method 19, Eq. 19-1',
        dependsOn: [...cdDepends, 'fdFactor_dscfPerMMBtu'],
        inputs: [...cdInputs, 'o2Dry_pct'],
      },
      (cd * fd * AMBIENT_O2_PCT) / (AMBIENT_O2_PCT - input.o2Dry_pct),
    );
  } else {
    const fc =
      input.fuel !== undefined
        ? w.number({ ...FC_TABLE_STEP, inputs: ['fuel'] }, F_FACTORS[input.fuel].fc)
        : w.number(FC_GIVEN_STEP, input.fcFactor_scfPerMMBtu as number);
    results.fcFactor_scfPerMMBtu = fc;
    results.emissionRate_lbPerMMBtu = w.number(
      {
        key: 'emissionRate_lbPerMMBtu',
        label: 'Emission rate, CO2-based F factor',
        equation: String.raw`E = C_d\,F_c\,\frac{100}{\%CO_{2d}}`,
        unit: 'lb/MMBtu',
        source: 'Method 19, Eq. 19-6',
        dependsOn: [...cdDepends, 'fcFactor_scfPerMMBtu'],
        inputs: [...cdInputs, 'co2Dry_pct'],
      },
      (cd * fc * PERCENT) / (input.co2Dry_pct as number),
    );
  }
  return results;
}
