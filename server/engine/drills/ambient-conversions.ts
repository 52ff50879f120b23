/** Ambient conversion drills: mixing ratios, number densities, mass concentrations, lifetimes. */
import { gasPollutants, type GasPollutant, type MixingRatioUnit } from '../../../shared/calculations/choices';
import { calculate } from '../index';
import { MOLECULAR_WEIGHT } from '../molecularWeights';
import { defineDrill, numberAt, type EngineRunner } from './define';
import { drawUntil, roundTo, type Draw } from './random';
import { given, PLACES, scenario } from './sheet';

type Values = Readonly<Record<string, number>>;

const stationName = (draw: Draw) => `${draw.pick(PLACES)} ${draw.pick(['fenceline station', 'air monitoring site', 'upwind station', 'downwind trailer'])}`;

/** Air temperature, K to 0.1, and station pressure, hPa to 0.1, from high plateaus to sea level (common practice, no source). */
const drawAir = (draw: Draw) => ({ temperature_K: draw.reading(250, 310, 0.1), pressure_hPa: draw.reading(600, 1030, 0.1) });

/** Three significant figures, as concentrations and rate constants are quoted. */
const threeFigures = (value: number) => Number(value.toPrecision(3));

// ---------------------------------------------------------------------------------------------
// ppb-to-number-density

interface NumberDensityData {
  species: GasPollutant;
  mixingRatio: number;
  mixingRatioUnit: MixingRatioUnit;
  temperature_K: number;
  pressure_hPa: number;
}

/** Typical ambient levels (common knowledge, no source; they only keep sheets plausible). */
const AMBIENT_LEVELS: { species: GasPollutant; unit: MixingRatioUnit; range: [number, number] }[] = [
  { species: 'O3', unit: 'ppb', range: [10, 90] },
  { species: 'NO2', unit: 'ppb', range: [1, 60] },
  { species: 'SO2', unit: 'ppb', range: [0.5, 20] },
  { species: 'CO', unit: 'ppb', range: [80, 400] },
  { species: 'CH4', unit: 'ppm', range: [1.8, 2.2] },
  { species: 'HCHO', unit: 'ppb', range: [0.5, 10] },
  { species: 'NO', unit: 'ppt', range: [10, 500] },
  { species: 'NH3', unit: 'ppb', range: [0.5, 30] },
];

const densityInputs = (d: NumberDensityData) => ({
  mixingRatio: d.mixingRatio,
  mixingRatioUnit: d.mixingRatioUnit,
  temperature_K: d.temperature_K,
  pressure_hPa: d.pressure_hPa,
});

const densityStep = (key: string, overrides: (v: Values) => Record<string, number> = () => ({})) =>
  (d: NumberDensityData, v: Values, engine: EngineRunner) => numberAt(engine.run('number-density', densityInputs(d), { overrides: overrides(v) }), key);

export const ppbToNumberDensity = defineDrill<NumberDensityData>({
  id: 'ppb-to-number-density',
  area: 'ambient-conversions',
  title: 'Mixing ratio to molecules per cubic centimetre',
  summary: 'Work out the number density of air from temperature and pressure, then of the trace gas from its mixing ratio.',
  methods: ['Ideal gas law'],
  fields: [
    { key: 'airNumberDensity_perCm3', label: 'Number density of air', unit: 'molecules/cm³', source: 'Ideal gas law; kB from CODATA 2018', compute: densityStep('airNumberDensity_perCm3') },
    {
      key: 'numberDensity_perCm3',
      label: 'Number density of the trace gas',
      unit: 'molecules/cm³',
      source: 'Definition of mixing ratio',
      dependsOn: ['airNumberDensity_perCm3'],
      compute: densityStep('numberDensity_perCm3', (v) => ({ airNumberDensity_perCm3: v.airNumberDensity_perCm3 })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const level = draw.pick(AMBIENT_LEVELS);
      const data: NumberDensityData = {
        species: level.species,
        mixingRatio: threeFigures(draw.uniform(level.range[0], level.range[1])),
        mixingRatioUnit: level.unit,
        ...drawAir(draw),
      };
      calculate('number-density', densityInputs(data));
      return scenario('ppb-to-number-density', seed, {
        title: `${stationName(draw)}: ${level.species} as a number density`,
        intro: 'A trace gas reading with the station’s air temperature and pressure. Express it in molecules per cubic centimetre.',
        given: [
          given('species', 'Gas', gasPollutants[data.species]),
          given('mixingRatio', 'Mixing ratio', data.mixingRatio, data.mixingRatioUnit),
          given('temperature_K', 'Air temperature', data.temperature_K, 'K'),
          given('pressure_hPa', 'Station pressure', data.pressure_hPa, 'hPa'),
        ],
        data,
      });
    }),
});

// ---------------------------------------------------------------------------------------------
// ppm-to-mg-per-m3

interface MassConcentrationData {
  pollutant: GasPollutant;
  ppmv: number;
  temperature_C: number;
  pressure_kPa: number;
}

/** Reference conditions a report may ask for, or the conditions measured on site. */
const CONDITIONS: { label: string; temperature_C?: number; pressure_kPa?: number }[] = [
  { label: 'Reference conditions, 0 °C and 101.325 kPa', temperature_C: 0, pressure_kPa: 101.325 },
  { label: 'Reference conditions, 20 °C and 101.325 kPa', temperature_C: 20, pressure_kPa: 101.325 },
  { label: 'Reference conditions, 25 °C and 101.325 kPa', temperature_C: 25, pressure_kPa: 101.325 },
  { label: 'Conditions measured on site' },
];

const conversionInputs = (d: MassConcentrationData) => ({
  value: d.ppmv,
  from: 'ppmv' as const,
  pollutant: d.pollutant,
  temperature_C: d.temperature_C,
  pressure_kPa: d.pressure_kPa,
});

const conversionStep = (key: string, overrides: (v: Values) => Record<string, number> = () => ({})) =>
  (d: MassConcentrationData, v: Values, engine: EngineRunner) =>
    numberAt(engine.run('concentration-conversion', conversionInputs(d), { overrides: overrides(v) }), key);

export const ppmToMgPerM3 = defineDrill<MassConcentrationData>({
  id: 'ppm-to-mg-per-m3',
  area: 'ambient-conversions',
  title: 'ppm to milligrams per cubic metre',
  summary: 'Work out the molar volume at the stated temperature and pressure, then the mass concentration from ppmv and molecular weight.',
  methods: ['Ideal gas law'],
  fields: [
    { key: 'molarVolume_L', label: 'Molar volume of an ideal gas', unit: 'L/mol', source: 'Ideal gas law; R from CODATA 2018', compute: conversionStep('molarVolume_L') },
    {
      key: 'mgPerM3',
      label: 'Mass concentration',
      unit: 'mg/m³',
      source: 'Ideal gas law',
      dependsOn: ['molarVolume_L'],
      compute: conversionStep('mgPerM3', (v) => ({ molarVolume_L: v.molarVolume_L })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const pollutant = draw.pick<GasPollutant>(['SO2', 'NO2', 'CO', 'NH3', 'H2S', 'HCl', 'HCHO', 'O3', 'NO']);
      const conditions = draw.pick(CONDITIONS);
      const data: MassConcentrationData = {
        pollutant,
        ppmv: threeFigures(draw.logUniform(0.05, 500)),
        temperature_C: conditions.temperature_C ?? draw.reading(5, 40, 0.1),
        pressure_kPa: conditions.pressure_kPa ?? draw.reading(80, 103, 0.01),
      };
      calculate('concentration-conversion', conversionInputs(data));
      return scenario('ppm-to-mg-per-m3', seed, {
        title: `${stationName(draw)}: ${pollutant} in mg/m³`,
        intro: `${conditions.label}. Convert the volume mixing ratio to a mass concentration at these conditions.`,
        given: [
          given('pollutant', 'Gas', gasPollutants[pollutant]),
          given('molecularWeight', 'Molecular weight', roundTo(MOLECULAR_WEIGHT[pollutant], 0.01), 'g/mol'),
          given('ppmv', 'Concentration', data.ppmv, 'ppmv'),
          given('temperature_C', 'Temperature', data.temperature_C, '°C'),
          given('pressure_kPa', 'Pressure', data.pressure_kPa, 'kPa'),
        ],
        data,
      });
    }),
});

// ---------------------------------------------------------------------------------------------
// oxidation-lifetime

type Oxidant = 'OH' | 'O3' | 'NO3';

interface LifetimeData {
  oxidant: Oxidant;
  oxidantMixingRatio: number;
  oxidantMixingRatioUnit: MixingRatioUnit;
  temperature_K: number;
  pressure_hPa: number;
  rateConstant_cm3PerMoleculeS: number;
}

/**
 * Oxidant levels and rate constants that bracket real chemistry (common knowledge, no source; the
 * compound is unnamed so no value is taught as a property of a real substance).
 */
const OXIDANTS: Record<Oxidant, { unit: MixingRatioUnit; level: [number, number]; k: [number, number]; name: string }> = {
  OH: { unit: 'ppt', level: [0.01, 0.4], k: [1e-14, 1e-10], name: 'hydroxyl radical (OH), daytime average' },
  O3: { unit: 'ppb', level: [15, 80], k: [1e-19, 1e-15], name: 'ozone (O3)' },
  NO3: { unit: 'ppt', level: [2, 200], k: [1e-17, 1e-11], name: 'nitrate radical (NO3), night-time average' },
};

const SECONDS = { minute: 60, fiftyYears: 50 * 365.25 * 86400 } as const;

const lifetimeInputs = (d: LifetimeData) => ({
  rateConstant_cm3PerMoleculeS: d.rateConstant_cm3PerMoleculeS,
  oxidantMixingRatio: d.oxidantMixingRatio,
  oxidantMixingRatioUnit: d.oxidantMixingRatioUnit,
  temperature_K: d.temperature_K,
  pressure_hPa: d.pressure_hPa,
});

const lifetimeStep = (key: string, overrides: (v: Values) => Record<string, number> = () => ({})) =>
  (d: LifetimeData, v: Values, engine: EngineRunner) => numberAt(engine.run('chemical-lifetime', lifetimeInputs(d), { overrides: overrides(v) }), key);

export const oxidationLifetime = defineDrill<LifetimeData>({
  id: 'oxidation-lifetime',
  area: 'ambient-conversions',
  title: 'Lifetime against an oxidant',
  summary: 'Turn the oxidant’s mixing ratio into a number density and work out the first-order lifetime of a compound in seconds and days.',
  methods: ['First-order kinetics', 'Ideal gas law'],
  fields: [
    {
      key: 'oxidantNumberDensity_perCm3',
      label: 'Oxidant number density, [X]',
      unit: 'molecules/cm³',
      source: 'Definition of mixing ratio; ideal gas law',
      compute: lifetimeStep('oxidantNumberDensity_perCm3'),
    },
    {
      key: 'lifetime_s',
      label: 'Lifetime, τ',
      unit: 's',
      source: 'First-order loss, τ = 1/(k[X])',
      dependsOn: ['oxidantNumberDensity_perCm3'],
      compute: lifetimeStep('lifetime_s', (v) => ({ oxidantNumberDensity_perCm3: v.oxidantNumberDensity_perCm3 })),
    },
    {
      key: 'lifetime_days',
      label: 'Lifetime in days',
      unit: 'days',
      source: 'Unit conversion (86400 s/day)',
      dependsOn: ['lifetime_s'],
      compute: lifetimeStep('lifetime_days', (v) => ({ lifetime_s: v.lifetime_s })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const oxidant = draw.pick<Oxidant>(['OH', 'OH', 'O3', 'NO3']);
      const o = OXIDANTS[oxidant];
      const data: LifetimeData = {
        oxidant,
        oxidantMixingRatio: threeFigures(draw.uniform(o.level[0], o.level[1])),
        oxidantMixingRatioUnit: o.unit,
        ...drawAir(draw),
        rateConstant_cm3PerMoleculeS: threeFigures(draw.logUniform(o.k[0], o.k[1])),
      };
      const seconds = numberAt(calculate('chemical-lifetime', lifetimeInputs(data)).results, 'lifetime_s');
      if (seconds < SECONDS.minute || seconds > SECONDS.fiftyYears) return undefined;
      return scenario('oxidation-lifetime', seed, {
        title: `${stationName(draw)}: lifetime against ${oxidant}`,
        intro: `A compound measured at the station reacts with the ${o.name}. Work out its lifetime against that oxidant alone.`,
        given: [
          given('oxidant', 'Oxidant', oxidant),
          given('oxidantMixingRatio', 'Oxidant mixing ratio', data.oxidantMixingRatio, data.oxidantMixingRatioUnit),
          given('rateConstant_cm3PerMoleculeS', 'Rate constant of the compound with the oxidant, k', data.rateConstant_cm3PerMoleculeS, 'cm³/(molecule·s)'),
          given('temperature_K', 'Air temperature', data.temperature_K, 'K'),
          given('pressure_hPa', 'Station pressure', data.pressure_hPa, 'hPa'),
        ],
        data,
      });
    }),
});
