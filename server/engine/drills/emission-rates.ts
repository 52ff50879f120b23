/** Emission rate drills: ppm to mass rates, F-factor rates, diluent corrections (Method 19, Part 75 App. F). */
import { fuels, type Fuel } from '../../../shared/calculations/choices';
import { calculate } from '../index';
import { MOLECULAR_WEIGHT } from '../molecularWeights';
import { defineDrill, numberAt, type EngineRunner } from './define';
import { drawUntil, roundTo } from './random';
import { given, scenario, siteName, type SourceKind } from './sheet';
import type { GivenValue } from './types';

type Values = Readonly<Record<string, number>>;

/** Reads a concentration as an analyzer reports it: 0.1 ppm. */
const ppmReading = (value: number) => roundTo(value, 0.1);

// ---------------------------------------------------------------------------------------------
// ppm-to-mass-rate

type MassPollutant = 'SO2' | 'NOx' | 'CO';

interface PpmToMassData {
  pollutant: MassPollutant;
  concentration_ppmvd: number;
  dryStdFlow_dscfm: number;
}

const POLLUTANT_NAMES: Record<MassPollutant, string> = { SO2: 'SO2', NOx: 'NOx (as NO2)', CO: 'CO' };

const massInputs = (d: PpmToMassData) => ({
  concentration_ppmvd: d.concentration_ppmvd,
  pollutant: d.pollutant,
  dryStdFlow_dscfh: d.dryStdFlow_dscfm * 60,
});

const massStep = (key: string, overrides: (v: Values) => Record<string, number> = () => ({})) => (d: PpmToMassData, v: Values, engine: EngineRunner) =>
  numberAt(engine.run('mass-emission-rate', massInputs(d), { overrides: overrides(v) }), key);

export const ppmToMassRate = defineDrill<PpmToMassData>({
  id: 'ppm-to-mass-rate',
  area: 'emission-rates',
  title: 'From ppm to pounds per hour',
  summary: 'Convert a dry concentration to lb/dscf with the published factor or the molar volume, then to lb/hr and tons per year.',
  methods: ['Method 19', 'Part 75, Appendix F'],
  fields: [
    {
      key: 'concentration_lbPerDscf',
      label: 'Concentration, Cd',
      unit: 'lb/dscf',
      source: 'Part 75, App. F, Table 1; Method 19, Table 19-1',
      compute: massStep('concentration_lbPerDscf'),
    },
    {
      key: 'emissionRate_lbPerHr',
      label: 'Mass emission rate',
      unit: 'lb/hr',
      source: 'Part 75, App. F (E = Cd Qsd)',
      dependsOn: ['concentration_lbPerDscf'],
      compute: massStep('emissionRate_lbPerHr', (v) => ({ concentration_lbPerDscf: v.concentration_lbPerDscf })),
    },
    {
      key: 'emissionRate_tonsPerYear',
      label: 'Annual emissions at continuous operation (8760 h)',
      unit: 'tons/yr',
      source: 'Unit conversion (8760 h/yr, 2000 lb per short ton)',
      dependsOn: ['emissionRate_lbPerHr'],
      compute: massStep('emissionRate_tonsPerYear', (v) => ({ emissionRate_lbPerHr: v.emissionRate_lbPerHr })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const pollutant = draw.pick<MassPollutant>(['SO2', 'NOx', 'CO']);
      const range = { SO2: [20, 1500], NOx: [5, 400], CO: [5, 800] }[pollutant];
      const data: PpmToMassData = {
        pollutant,
        concentration_ppmvd: ppmReading(draw.logUniform(range[0], range[1])),
        dryStdFlow_dscfm: roundTo(draw.logUniform(3000, 900000), 10),
      };
      calculate('mass-emission-rate', massInputs(data));
      const sheet: GivenValue[] = [
        given('pollutant', 'Pollutant', POLLUTANT_NAMES[pollutant]),
        given('concentration_ppmvd', 'Concentration, dry basis', data.concentration_ppmvd, 'ppmvd'),
        given('dryStdFlow_dscfm', 'Dry standard flow rate, Qsd', data.dryStdFlow_dscfm, 'dscfm'),
      ];
      if (pollutant === 'CO') sheet.push(given('molecularWeight', 'Molecular weight of CO', roundTo(MOLECULAR_WEIGHT.CO, 0.01), 'lb/lb-mol'));
      return scenario('ppm-to-mass-rate', seed, {
        title: `${siteName(draw)}: ${pollutant} mass rate`,
        intro: 'One test run’s average concentration and stack flow. Work out the concentration in lb/dscf, the hourly rate and the annual total at continuous operation.',
        given: sheet,
        data,
      });
    }),
});

// ---------------------------------------------------------------------------------------------
// f-factor-rate

interface FFactorData {
  pollutant: 'SO2' | 'NOx';
  concentration_ppmvd: number;
  o2Dry_pct: number;
  fuel: Fuel;
}

/** Stack O2 a crew sees burning each fuel (common practice, no source). */
const FUEL_O2_PCT: Partial<Record<Fuel, [number, number]>> = {
  naturalGas: [2, 6],
  propane: [2, 6],
  distillateOil: [2, 7],
  residualOil: [2, 7],
  bituminousCoal: [3, 9],
  subbituminousCoal: [3, 9],
  lignite: [3, 9],
  anthracite: [3, 9],
  wood: [5, 12],
  woodBark: [5, 12],
  municipalSolidWaste: [7, 12],
};

const fFactorInputs = (d: FFactorData) => ({
  concentration_ppmvd: d.concentration_ppmvd,
  pollutant: d.pollutant,
  o2Dry_pct: d.o2Dry_pct,
  fuel: d.fuel,
});

const fFactorStep = (key: string, overrides: (v: Values) => Record<string, number> = () => ({})) => (d: FFactorData, v: Values, engine: EngineRunner) =>
  numberAt(engine.run('f-factor-rate', fFactorInputs(d), { overrides: overrides(v) }), key);

export const fFactorRate = defineDrill<FFactorData>({
  id: 'f-factor-rate',
  area: 'emission-rates',
  title: 'Emission rate in lb/MMBtu by the F factor',
  summary: 'Look up the fuel’s dry F factor, convert ppm to lb/dscf, and work out the heat-input emission rate with the O2 correction.',
  methods: ['Method 19'],
  fields: [
    {
      key: 'concentration_lbPerDscf',
      label: 'Concentration, Cd',
      unit: 'lb/dscf',
      source: 'Method 19, Table 19-1; Part 75, App. F, Table 1',
      compute: fFactorStep('concentration_lbPerDscf'),
    },
    {
      key: 'fdFactor_dscfPerMMBtu',
      label: 'Dry F factor for the fuel, Fd',
      unit: 'dscf/MMBtu',
      source: 'Method 19, Table 19-2',
      // the table's values sit within 1 % of each other for some fuels: ask for the table value
      tolerancePct: 0.1,
      compute: fFactorStep('fdFactor_dscfPerMMBtu'),
    },
    {
      key: 'emissionRate_lbPerMMBtu',
      label: 'Emission rate, E',
      unit: 'lb/MMBtu',
      source: 'Method 19, Eq. 19-1',
      dependsOn: ['concentration_lbPerDscf', 'fdFactor_dscfPerMMBtu'],
      compute: fFactorStep('emissionRate_lbPerMMBtu', (v) => ({
        concentration_lbPerDscf: v.concentration_lbPerDscf,
        fdFactor_dscfPerMMBtu: v.fdFactor_dscfPerMMBtu,
      })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const fuel = draw.pick(Object.keys(FUEL_O2_PCT) as Fuel[]);
      const gaseous = fuel === 'naturalGas' || fuel === 'propane';
      const pollutant = gaseous || draw.chance(0.5) ? 'NOx' : 'SO2';
      const [o2Min, o2Max] = FUEL_O2_PCT[fuel] as [number, number];
      const range = pollutant === 'NOx' ? [5, 400] : [20, 1500];
      const data: FFactorData = {
        pollutant,
        concentration_ppmvd: ppmReading(draw.logUniform(range[0], range[1])),
        o2Dry_pct: draw.reading(o2Min, o2Max, 0.1),
        fuel,
      };
      calculate('f-factor-rate', fFactorInputs(data));
      return scenario('f-factor-rate', seed, {
        title: `${siteName(draw, ['boiler', 'heater'])}: ${pollutant} in lb/MMBtu`,
        intro: 'A test run’s averages on a unit firing one fuel. Express the emission rate per heat input with the O2-based F factor.',
        given: [
          given('fuel', 'Fuel', fuels[fuel]),
          given('pollutant', 'Pollutant', POLLUTANT_NAMES[pollutant]),
          given('concentration_ppmvd', 'Concentration, dry basis', data.concentration_ppmvd, 'ppmvd'),
          given('o2Dry_pct', 'O2, dry basis', data.o2Dry_pct, '%'),
        ],
        data,
      });
    }),
});

// ---------------------------------------------------------------------------------------------
// diluent-correction

interface DiluentData {
  referenceO2_pct: number;
  measuredO2_pct: number;
  nox_ppmvd: number;
  co_ppmvd: number;
}

/** Reference O2 and the O2 a crew measures, by source kind (common practice in Part 60 subparts, no single source). */
const DILUENT_CASES: { kind: SourceKind; referenceO2_pct: number; measured: [number, number]; nox: [number, number] }[] = [
  { kind: 'boiler', referenceO2_pct: 3, measured: [2, 9], nox: [20, 250] },
  { kind: 'heater', referenceO2_pct: 3, measured: [2, 8], nox: [15, 150] },
  { kind: 'turbine', referenceO2_pct: 15, measured: [12, 16], nox: [2, 40] },
  { kind: 'incinerator', referenceO2_pct: 7, measured: [8, 13], nox: [80, 250] },
];

const diluentStep =
  (pollutant: 'nox' | 'co', key: string, overrides: (v: Values) => Record<string, number> = () => ({})) =>
  (d: DiluentData, v: Values, engine: EngineRunner) =>
    numberAt(
      engine.run(
        'diluent-correction',
        { concentration: pollutant === 'nox' ? d.nox_ppmvd : d.co_ppmvd, measuredO2_pct: d.measuredO2_pct, referenceO2_pct: d.referenceO2_pct },
        { overrides: overrides(v), stepPrefix: { key: pollutant, label: pollutant === 'nox' ? 'NOx' : 'CO' } },
      ),
      key,
    );

export const diluentCorrection = defineDrill<DiluentData>({
  id: 'diluent-correction',
  area: 'emission-rates',
  title: 'Correcting to a reference O2',
  summary: 'Work out the O2 correction factor and correct NOx and CO to the reference oxygen of the unit’s limit.',
  methods: ['Part 60 subparts (O2 correction)'],
  fields: [
    {
      key: 'o2CorrectionFactor',
      label: 'O2 correction factor',
      unit: '',
      source: 'Common practice (Part 60 subparts, O2 correction)',
      compute: diluentStep('nox', 'o2CorrectionFactor'),
    },
    {
      key: 'noxCorrected_ppmvd',
      label: 'NOx corrected to the reference O2',
      unit: 'ppmvd',
      source: 'Common practice (Part 60 subparts, O2 correction)',
      dependsOn: ['o2CorrectionFactor'],
      compute: diluentStep('nox', 'correctedConcentration', (v) => ({ o2CorrectionFactor: v.o2CorrectionFactor })),
    },
    {
      key: 'coCorrected_ppmvd',
      label: 'CO corrected to the reference O2',
      unit: 'ppmvd',
      source: 'Common practice (Part 60 subparts, O2 correction)',
      dependsOn: ['o2CorrectionFactor'],
      compute: diluentStep('co', 'correctedConcentration', (v) => ({ o2CorrectionFactor: v.o2CorrectionFactor })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const c = draw.pick(DILUENT_CASES);
      const measuredO2_pct = draw.reading(c.measured[0], c.measured[1], 0.1);
      // a measured O2 at the reference would make the correction trivial
      if (Math.abs(measuredO2_pct - c.referenceO2_pct) < 0.5) return undefined;
      const data: DiluentData = {
        referenceO2_pct: c.referenceO2_pct,
        measuredO2_pct,
        nox_ppmvd: ppmReading(draw.uniform(c.nox[0], c.nox[1])),
        co_ppmvd: ppmReading(draw.logUniform(2, 400)),
      };
      return scenario('diluent-correction', seed, {
        title: `${siteName(draw, [c.kind])}: results at ${c.referenceO2_pct} % O2`,
        intro: `The unit’s limits are stated at ${c.referenceO2_pct} % O2, dry. Correct the run averages to that oxygen level.`,
        given: [
          given('nox_ppmvd', 'NOx, run average, dry basis', data.nox_ppmvd, 'ppmvd'),
          given('co_ppmvd', 'CO, run average, dry basis', data.co_ppmvd, 'ppmvd'),
          given('measuredO2_pct', 'O2, run average, dry basis', data.measuredO2_pct, '%'),
          given('referenceO2_pct', 'Reference O2 of the limit', data.referenceO2_pct, '%'),
        ],
        data,
      });
    }),
});
