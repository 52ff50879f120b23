/** Particulate sampling drills (Method 5, with Methods 1–4 for the whole run). */
import type { CalculationInput } from '../../../shared/calculations/schemas';
import { calculate } from '../index';
import { defineDrill, numberAt, type EngineRunner } from './define';
import {
  calibratedNozzle,
  drawBarometric,
  drawFlueGas,
  drawMeterFactor,
  drawPitotCoefficient,
  drawStaticPressure,
  drawTraverse,
  inRange,
  ISOKINETIC_PCT,
  MOISTURE_FRACTION,
  NOZZLE_SIZES_IN,
  SATURATION_MARGIN,
  saturationMoistureFraction,
  STACK_TEMP_F,
  type TraverseReading,
} from './field-values';
import {
  condensateGain,
  impingerSheet,
  impingerTable,
  meterGivens,
  meterInputs,
  meterVolume,
  splitCondensate,
  waterForMoisture,
  type ImpingerReading,
  type MeterRun,
} from './flow-moisture';
import { drawUntil, mean, roundTo, type Draw } from './random';
import { column, given, scenario, siteName, table } from './sheet';
import type { DrillScenario, DrillTemplate } from './types';

type Values = Readonly<Record<string, number>>;

/** Most runs come back within Method 5's 90–110 %; some do not, and the drill should show it. */
function drawIsokineticTarget(draw: Draw): number {
  if (draw.chance(0.8)) return draw.uniform(91, 109);
  return draw.chance(0.5) ? draw.uniform(81, 89) : draw.uniform(111, 119);
}

/**
 * Picks the nozzle a crew would: the size whose isokinetic sampling rate is nearest a comfortable
 * 0.6–0.9 dscfm. The rate at 100 % comes from the engine (isokinetic variation is proportional
 * to Vm(std), Method 5, Eq. 5-9). Returns the calibrated diameter and Vm(std) at 100 %.
 */
function chooseNozzle(
  draw: Draw,
  run: Omit<CalculationInput<'isokinetic'>, 'nozzleDiameter_in' | 'meterVolumeStd_dscf'>,
): { nozzleDiameter_in: number; volumeAt100_dscf: number } | undefined {
  const targetRate = draw.uniform(0.6, 0.9);
  let best: { nozzleDiameter_in: number; volumeAt100_dscf: number; miss: number } | undefined;
  for (const nominal of NOZZLE_SIZES_IN) {
    const nozzleDiameter_in = calibratedNozzle(draw, nominal);
    const trial = numberAt(calculate('isokinetic', { ...run, nozzleDiameter_in, meterVolumeStd_dscf: 1 }).results, 'isokinetic_pct');
    const volumeAt100_dscf = 100 / trial;
    const miss = Math.abs(volumeAt100_dscf / run.sampleTime_min - targetRate);
    if (!best || miss < best.miss) best = { nozzleDiameter_in, volumeAt100_dscf, miss };
  }
  if (!best) return undefined;
  const rate = best.volumeAt100_dscf / run.sampleTime_min;
  return rate >= 0.4 && rate <= 1.2 ? best : undefined;
}

// ---------------------------------------------------------------------------------------------
// isokinetic-check

interface IsokineticData {
  stackTemp_F: number;
  meterVolumeStd_dscf: number;
  absoluteStackPressure_inHg: number;
  velocity_fps: number;
  nozzleDiameter_in: number;
  sampleTime_min: number;
  moistureFraction: number;
}

const isoStep = (key: string, overrides: (v: Values) => Record<string, number> = () => ({})) =>
  (d: IsokineticData, v: Values, engine: EngineRunner) => numberAt(engine.run('isokinetic', { ...d }, { overrides: overrides(v) }), key);

export const isokineticCheck = defineDrill<IsokineticData>({
  id: 'isokinetic-check',
  area: 'particulate',
  title: 'Was the run isokinetic?',
  summary: 'From a reduced Method 5 run, work out the nozzle area and the isokinetic variation, and judge it against 90–110 %.',
  methods: ['Method 5'],
  fields: [
    { key: 'nozzleArea_ft2', label: 'Nozzle cross-sectional area, An', unit: 'ft²', source: 'Geometry (circle)', compute: isoStep('nozzleArea_ft2') },
    { key: 'absoluteStackTemp_R', label: 'Absolute stack temperature, Ts', unit: '°R', source: 'Method 5, §12', compute: isoStep('absoluteStackTemp_R') },
    {
      key: 'isokinetic_pct',
      label: 'Isokinetic variation, I',
      unit: '%',
      source: 'Method 5, Eq. 5-9',
      dependsOn: ['nozzleArea_ft2', 'absoluteStackTemp_R'],
      compute: isoStep('isokinetic_pct', (v) => ({ nozzleArea_ft2: v.nozzleArea_ft2, absoluteStackTemp_R: v.absoluteStackTemp_R })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const stackTemp_F = draw.reading(STACK_TEMP_F.min, STACK_TEMP_F.max, 1);
      const absoluteStackPressure_inHg = roundTo(drawBarometric(draw) + draw.uniform(-0.15, 0.15), 0.01);
      const saturation = saturationMoistureFraction(stackTemp_F, absoluteStackPressure_inHg);
      const moistureFraction = draw.reading(MOISTURE_FRACTION.min, MOISTURE_FRACTION.max, 0.001);
      if (moistureFraction >= SATURATION_MARGIN * saturation) return undefined;
      const run = {
        stackTemp_F,
        absoluteStackPressure_inHg,
        velocity_fps: draw.reading(10, 90, 0.01),
        sampleTime_min: draw.pick([60, 72, 96, 120, 144]),
        moistureFraction,
      };
      const nozzle = chooseNozzle(draw, run);
      if (!nozzle) return undefined;
      const data: IsokineticData = {
        ...run,
        nozzleDiameter_in: nozzle.nozzleDiameter_in,
        meterVolumeStd_dscf: roundTo((nozzle.volumeAt100_dscf * drawIsokineticTarget(draw)) / 100, 0.001),
      };
      const iso = numberAt(calculate('isokinetic', data).results, 'isokinetic_pct');
      if (!inRange(iso, ISOKINETIC_PCT)) return undefined;
      return scenario('isokinetic-check', seed, {
        title: `${siteName(draw)}: Method 5 run, isokinetic check`,
        intro: 'The run’s data have been reduced this far. Work out the nozzle area and the isokinetic variation.',
        given: [
          given('stackTemp_F', 'Average stack temperature', data.stackTemp_F, '°F'),
          given('absoluteStackPressure_inHg', 'Absolute stack pressure, Ps', data.absoluteStackPressure_inHg, 'in. Hg'),
          given('velocity_fps', 'Average stack gas velocity, vs', data.velocity_fps, 'ft/s'),
          given('moistureFraction', 'Moisture fraction, Bws', data.moistureFraction),
          given('meterVolumeStd_dscf', 'Sample volume at standard conditions, Vm(std)', data.meterVolumeStd_dscf, 'dscf'),
          given('nozzleDiameter_in', 'Nozzle diameter (calibrated), Dn', data.nozzleDiameter_in, 'in.'),
          given('sampleTime_min', 'Total sampling time, θ', data.sampleTime_min, 'min'),
        ],
        data,
      });
    }),
});

// ---------------------------------------------------------------------------------------------
// particulate-loading

interface ParticulateLoadingData extends MeterRun {
  filterGain_mg: number;
  rinseResidue_mg: number;
  dryStdFlow_dscfm: number;
}

const catchOf = (d: { filterGain_mg: number; rinseResidue_mg: number }) => roundTo(d.filterGain_mg + d.rinseResidue_mg, 0.1);

/** Vm(std) through the engine's Method 4 calculation (Eq. 4-3, the same as Method 5, Eq. 5-1); no water is needed for it. */
const meteredVolumeStd = (m: MeterRun, engine: EngineRunner) =>
  numberAt(engine.run('moisture', { ...meterInputs(m), condensateGain_ml: 0 }, { show: ['meterVolumeStd_dscf'] }), 'meterVolumeStd_dscf');

const loadingInputs = (d: ParticulateLoadingData, volumeStd_dscf: number) => ({
  filterCatch_mg: catchOf(d),
  meterVolumeStd_dscf: volumeStd_dscf,
  dryStdFlow_dscfh: d.dryStdFlow_dscfm * 60,
});

export const particulateLoading = defineDrill<ParticulateLoadingData>({
  id: 'particulate-loading',
  area: 'particulate',
  title: 'Particulate concentration and emission rate',
  summary: 'From the meter readings and the front-half catch, work out the sample volume, the concentration in gr/dscf and mg/dscm, and the emission rate.',
  methods: ['Method 5'],
  fields: [
    {
      key: 'meterVolumeStd_dscf',
      label: 'Sample volume at standard conditions, Vm(std)',
      unit: 'dscf',
      source: 'Method 5, Eq. 5-1 (Method 4, Eq. 4-3)',
      compute: (d, _v, engine) => meteredVolumeStd(d, engine),
    },
    {
      key: 'concentration_grPerDscf',
      label: 'Particulate concentration, cs',
      unit: 'gr/dscf',
      source: 'Method 5, Eq. 5-6',
      dependsOn: ['meterVolumeStd_dscf'],
      compute: (d, v, engine) => numberAt(engine.run('particulate', loadingInputs(d, v.meterVolumeStd_dscf)), 'concentration_grPerDscf'),
    },
    {
      key: 'concentration_mgPerDscm',
      label: 'Particulate concentration, metric',
      unit: 'mg/dscm',
      source: 'Method 5, Eq. 5-6 (metric form)',
      dependsOn: ['meterVolumeStd_dscf'],
      compute: (d, v, engine) => numberAt(engine.run('particulate', loadingInputs(d, v.meterVolumeStd_dscf)), 'concentration_mgPerDscm'),
    },
    {
      key: 'emissionRate_lbPerHr',
      label: 'Particulate emission rate',
      unit: 'lb/hr',
      source: 'Method 5 (cs × Qsd ÷ 7000 gr/lb)',
      dependsOn: ['concentration_grPerDscf'],
      compute: (d, v, engine) =>
        numberAt(
          engine.run('particulate', loadingInputs(d, v.meterVolumeStd_dscf), {
            overrides: { concentration_grPerDscf: v.concentration_grPerDscf },
          }),
          'emissionRate_lbPerHr',
        ),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const meter: MeterRun = {
        meterInitial_ft3: draw.reading(100, 900, 0.001),
        meterFinal_ft3: 0,
        meterFactorY: drawMeterFactor(draw),
        barometric_inHg: drawBarometric(draw),
        orificePressure_inH2O: draw.reading(0.8, 3.5, 0.01),
        meterTemp_F: draw.reading(50, 110, 1),
      };
      meter.meterFinal_ft3 = roundTo(meter.meterInitial_ft3 + draw.uniform(25, 90), 0.001);
      const catch_mg = particulateCatch(draw, meterVolumeStdOf(meter), draw.logUniform(0.0005, 0.05));
      if (!catch_mg) return undefined;
      const data: ParticulateLoadingData = {
        ...meter,
        ...catch_mg,
        dryStdFlow_dscfm: roundTo(draw.logUniform(3000, 600000), 10),
      };
      return scenario('particulate-loading', seed, {
        title: `${siteName(draw)}: Method 5 run, front-half catch`,
        intro:
          'The front half of a Method 5 train has been weighed. The dry standard flow comes from the run’s velocity traverse. Work out the sample volume, the concentration and the emission rate.',
        given: [
          ...meterGivens(data),
          given('filterGain_mg', 'Filter, net weight gain', data.filterGain_mg, 'mg'),
          given('rinseResidue_mg', 'Probe and nozzle rinse, net residue (blank subtracted)', data.rinseResidue_mg, 'mg'),
          given('dryStdFlow_dscfm', 'Dry standard flow rate, Qsd', data.dryStdFlow_dscfm, 'dscfm'),
        ],
        data,
      });
    }),
});

const meterVolumeStdOf = (m: MeterRun) =>
  numberAt(calculate('moisture', { ...meterInputs(m), condensateGain_ml: 0 }).results, 'meterVolumeStd_dscf');

/**
 * A front-half catch for a target concentration (scaled through the engine: cs is proportional to
 * mn, Method 5, Eq. 5-6), split between filter and rinse and read to 0.1 mg.
 */
function particulateCatch(draw: Draw, volumeStd_dscf: number, targetGrPerDscf: number) {
  const perMg = numberAt(calculate('particulate', { filterCatch_mg: 1, meterVolumeStd_dscf: volumeStd_dscf }).results, 'concentration_grPerDscf');
  const total = targetGrPerDscf / perMg;
  const filterShare = draw.uniform(0.6, 0.9);
  const filterGain_mg = roundTo(total * filterShare, 0.1);
  const rinseResidue_mg = roundTo(total * (1 - filterShare), 0.1);
  if (filterGain_mg < 1 || rinseResidue_mg < 0.2) return undefined;
  return { filterGain_mg, rinseResidue_mg };
}

// ---------------------------------------------------------------------------------------------
// whole-run-reduction: the flagship, a whole Method 5 field data sheet reduced step by step

export interface SampleTraverseReading extends TraverseReading {
  orificePressure_inH2O: number;
  meterInlet_F: number;
  meterOutlet_F: number;
}

interface WholeRunData {
  stackDiameter_in: number;
  pitotCoefficient: number;
  nozzleDiameter_in: number;
  minutesPerPoint: number;
  barometric_inHg: number;
  staticPressure_inH2O: number;
  meterFactorY: number;
  meterInitial_ft3: number;
  meterFinal_ft3: number;
  traverse: SampleTraverseReading[];
  impingers: ImpingerReading[];
  silicaGelInitial_g: number;
  silicaGelFinal_g: number;
  co2_pct: number;
  o2_pct: number;
  filterGain_mg: number;
  rinseResidue_mg: number;
}

/** The run's averages and totals, worked from the sheet as a crew works them (common practice). */
function runSummary(d: WholeRunData) {
  return {
    sampleTime_min: d.traverse.length * d.minutesPerPoint,
    stackTemp_F: mean(d.traverse.map((r) => r.stackTemp_F)),
    meter: {
      meterInitial_ft3: d.meterInitial_ft3,
      meterFinal_ft3: d.meterFinal_ft3,
      meterFactorY: d.meterFactorY,
      barometric_inHg: d.barometric_inHg,
      orificePressure_inH2O: mean(d.traverse.map((r) => r.orificePressure_inH2O)),
      meterTemp_F: mean(d.traverse.flatMap((r) => [r.meterInlet_F, r.meterOutlet_F])),
    } satisfies MeterRun,
  };
}

const runMoistureInputs = (d: WholeRunData) => ({
  ...meterInputs(runSummary(d).meter),
  condensateGain_ml: condensateGain(d.impingers),
  silicaGelGain_g: roundTo(d.silicaGelFinal_g - d.silicaGelInitial_g, 0.1),
});

const runFlowInputs = (d: WholeRunData, v: Values) => ({
  deltaP_inH2O: d.traverse.map((r) => r.deltaP_inH2O),
  stackTemp_F: d.traverse.map((r) => r.stackTemp_F),
  barometric_inHg: d.barometric_inHg,
  staticPressure_inH2O: d.staticPressure_inH2O,
  pitotCoefficient: d.pitotCoefficient,
  dryMolecularWeight: v.dryMolecularWeight,
  moistureFraction: v.moistureFraction,
  stackDiameter_in: d.stackDiameter_in,
});

const runParticulateInputs = (d: WholeRunData, v: Values) => ({
  filterCatch_mg: catchOf(d),
  meterVolumeStd_dscf: v.meterVolumeStd_dscf,
  dryStdFlow_dscfh: v.dryStdFlow_dscfh,
});

export const wholeRunReduction: DrillTemplate<WholeRunData> = defineDrill<WholeRunData>({
  id: 'whole-run-reduction',
  area: 'particulate',
  title: 'Whole-run reduction of a Method 5 test',
  summary:
    'A complete field data sheet: reduce it step by step to moisture, molecular weights, velocity, dry standard flow, isokinetic variation, concentration and emission rate.',
  methods: ['Method 1', 'Method 2', 'Method 3', 'Method 4', 'Method 5'],
  fields: [
    {
      key: 'meterVolumeStd_dscf',
      label: 'Sample volume at standard conditions, Vm(std)',
      unit: 'dscf',
      source: 'Method 5, Eq. 5-1 (Method 4, Eq. 4-3)',
      compute: (d, _v, engine) => numberAt(engine.run('moisture', runMoistureInputs(d)), 'meterVolumeStd_dscf'),
    },
    {
      key: 'waterVaporStd_scf',
      label: 'Water vapor collected, at standard conditions, Vw(std)',
      unit: 'scf',
      source: 'Method 4, Eqs. 4-1 and 4-2',
      compute: (d, _v, engine) => numberAt(engine.run('moisture', runMoistureInputs(d)), 'waterVaporStd_scf'),
    },
    {
      key: 'moistureFraction',
      label: 'Moisture fraction, Bws',
      unit: '(fraction)',
      source: 'Method 4, Eq. 4-4',
      dependsOn: ['meterVolumeStd_dscf', 'waterVaporStd_scf'],
      compute: (d, v, engine) =>
        numberAt(
          engine.run('moisture', runMoistureInputs(d), {
            overrides: { waterVaporStd_scf: v.waterVaporStd_scf, meterVolumeStd_dscf: v.meterVolumeStd_dscf },
          }),
          'moistureFraction',
        ),
    },
    {
      key: 'dryMolecularWeight',
      label: 'Dry molecular weight, Md',
      unit: 'lb/lb-mol',
      source: 'Method 3, §12',
      compute: (d, _v, engine) => numberAt(engine.run('gas-composition', { co2_pct: d.co2_pct, o2_pct: d.o2_pct }), 'dryMolecularWeight'),
    },
    {
      key: 'wetMolecularWeight',
      label: 'Molecular weight, wet basis, Ms',
      unit: 'lb/lb-mol',
      source: 'Method 2, Eq. 2-5',
      dependsOn: ['moistureFraction', 'dryMolecularWeight'],
      compute: (d, v, engine) => numberAt(engine.run('stack-flow', runFlowInputs(d, v)), 'wetMolecularWeight'),
    },
    {
      key: 'velocity_fps',
      label: 'Average stack gas velocity, vs',
      unit: 'ft/s',
      source: 'Method 2, Eq. 2-9',
      dependsOn: ['wetMolecularWeight'],
      compute: (d, v, engine) =>
        numberAt(engine.run('stack-flow', runFlowInputs(d, v), { overrides: { wetMolecularWeight: v.wetMolecularWeight } }), 'velocity_fps'),
    },
    {
      key: 'dryStdFlow_dscfh',
      label: 'Dry standard flow rate, Qsd',
      unit: 'dscf/hr',
      source: 'Method 2, Eq. 2-10',
      dependsOn: ['moistureFraction', 'velocity_fps'],
      compute: (d, v, engine) =>
        numberAt(
          engine.run('stack-flow', runFlowInputs(d, v), { overrides: { velocity_fps: v.velocity_fps } }),
          'dryStdFlow_dscfh',
        ),
    },
    {
      key: 'isokinetic_pct',
      label: 'Isokinetic variation, I',
      unit: '%',
      source: 'Method 5, Eq. 5-9',
      dependsOn: ['meterVolumeStd_dscf', 'moistureFraction', 'velocity_fps'],
      compute: (d, v, engine) => {
        const summary = runSummary(d);
        const ps = numberAt(engine.run('stack-flow', runFlowInputs(d, v)), 'absoluteStackPressure_inHg');
        return numberAt(
          engine.run('isokinetic', {
            stackTemp_F: summary.stackTemp_F,
            meterVolumeStd_dscf: v.meterVolumeStd_dscf,
            absoluteStackPressure_inHg: ps,
            velocity_fps: v.velocity_fps,
            nozzleDiameter_in: d.nozzleDiameter_in,
            sampleTime_min: summary.sampleTime_min,
            moistureFraction: v.moistureFraction,
          }),
          'isokinetic_pct',
        );
      },
    },
    {
      key: 'concentration_grPerDscf',
      label: 'Particulate concentration, cs',
      unit: 'gr/dscf',
      source: 'Method 5, Eq. 5-6',
      dependsOn: ['meterVolumeStd_dscf'],
      compute: (d, v, engine) => numberAt(engine.run('particulate', runParticulateInputs(d, v)), 'concentration_grPerDscf'),
    },
    {
      key: 'emissionRate_lbPerHr',
      label: 'Particulate emission rate',
      unit: 'lb/hr',
      source: 'Method 5 (cs × Qsd ÷ 7000 gr/lb)',
      dependsOn: ['dryStdFlow_dscfh', 'concentration_grPerDscf'],
      compute: (d, v, engine) =>
        numberAt(
          engine.run('particulate', runParticulateInputs(d, v), { overrides: { concentration_grPerDscf: v.concentration_grPerDscf } }),
          'emissionRate_lbPerHr',
        ),
    },
  ],
  generate: (seed) => drawUntil(seed, (draw) => drawWholeRun(seed, draw)),
});

function drawWholeRun(seed: number, draw: Draw): DrillScenario<WholeRunData> | undefined {
  const title = `${siteName(draw, ['boiler', 'kiln', 'dryer', 'incinerator'])}: Method 5 particulate, run 1`;
  const stackDiameter_in = draw.reading(24, 180, 0.5);
  const pointsPerDiameter = draw.pick([6, 8, 10, 12]);
  const points = 2 * pointsPerDiameter;
  const minutesPerPoint = draw.pick([2, 2.5, 3, 4, 5, 6].filter((m) => m * points >= 60 && m * points <= 144));
  const pitotCoefficient = drawPitotCoefficient(draw);
  const barometric_inHg = drawBarometric(draw);
  const staticPressure_inH2O = drawStaticPressure(draw);
  const { o2_pct, co2_pct } = drawFlueGas(draw);
  const velocityHeads = drawTraverse(draw, pointsPerDiameter, draw.logUniform(0.08, 1.8), draw.reading(STACK_TEMP_F.min, STACK_TEMP_F.max, 1));

  // the meter box: ΔH set in step with Δp at each point, meter warming through the run
  const orificeRatio = draw.uniform(1.2, 4.5);
  const meterStart_F = draw.uniform(50, 95);
  const meterRise_F = draw.uniform(0, 15);
  const traverse: SampleTraverseReading[] = velocityHeads.map((r, i) => {
    const inlet = meterStart_F + (meterRise_F * i) / points + draw.uniform(-1, 1);
    return {
      ...r,
      orificePressure_inH2O: roundTo(Math.min(6, Math.max(0.2, orificeRatio * r.deltaP_inH2O)), 0.01),
      meterInlet_F: roundTo(inlet, 1),
      meterOutlet_F: roundTo(inlet - draw.uniform(1, 6), 1),
    };
  });

  const sheet: WholeRunData = {
    stackDiameter_in,
    pitotCoefficient,
    nozzleDiameter_in: 0,
    minutesPerPoint,
    barometric_inHg,
    staticPressure_inH2O,
    meterFactorY: drawMeterFactor(draw),
    meterInitial_ft3: draw.reading(100, 900, 0.001),
    meterFinal_ft3: 0,
    traverse,
    impingers: [],
    silicaGelInitial_g: 0,
    silicaGelFinal_g: 0,
    co2_pct,
    o2_pct,
    filterGain_mg: 0,
    rinseResidue_mg: 0,
  };
  const summary = runSummary(sheet);

  // the gas: moisture below saturation, then velocity and pressure from the engine
  const md = numberAt(calculate('gas-composition', { co2_pct, o2_pct }).results, 'dryMolecularWeight');
  // Ps does not depend on the moisture, so a trial moisture serves to read it
  const flowTrial = calculate('stack-flow', runFlowInputs(sheet, { dryMolecularWeight: md, moistureFraction: 0.1 })).results;
  const absolutePressure = numberAt(flowTrial, 'absoluteStackPressure_inHg');
  const saturation = saturationMoistureFraction(summary.stackTemp_F, absolutePressure);
  const bwsTarget = draw.uniform(MOISTURE_FRACTION.min, Math.min(MOISTURE_FRACTION.max, SATURATION_MARGIN * saturation));
  if (bwsTarget < MOISTURE_FRACTION.min) return undefined;
  const flow = calculate('stack-flow', runFlowInputs(sheet, { dryMolecularWeight: md, moistureFraction: bwsTarget })).results;

  // the nozzle and the metered volume for an isokinetic run
  const nozzle = chooseNozzle(draw, {
    stackTemp_F: summary.stackTemp_F,
    absoluteStackPressure_inHg: absolutePressure,
    velocity_fps: numberAt(flow, 'velocity_fps'),
    sampleTime_min: summary.sampleTime_min,
    moistureFraction: bwsTarget,
  });
  if (!nozzle) return undefined;
  sheet.nozzleDiameter_in = nozzle.nozzleDiameter_in;
  const volumeStdTarget = (nozzle.volumeAt100_dscf * drawIsokineticTarget(draw)) / 100;
  // Vm(std) is proportional to Vm (Method 5, Eq. 5-1): scale a trial volume through the engine
  const perFt3 = meterVolumeStdOf({ ...summary.meter, meterFinal_ft3: summary.meter.meterInitial_ft3 + 10 }) / 10;
  sheet.meterFinal_ft3 = roundTo(sheet.meterInitial_ft3 + volumeStdTarget / perFt3, 0.001);

  const water = waterForMoisture(draw, { ...summary.meter, meterFinal_ft3: sheet.meterFinal_ft3 }, bwsTarget);
  sheet.impingers = impingerSheet(splitCondensate(draw, water.condensate_ml));
  sheet.silicaGelInitial_g = water.silicaGelInitial_g;
  sheet.silicaGelFinal_g = water.silicaGelFinal_g;

  const particulate = particulateCatch(draw, volumeStdTarget, draw.logUniform(0.001, 0.05));
  if (!particulate) return undefined;
  sheet.filterGain_mg = particulate.filterGain_mg;
  sheet.rinseResidue_mg = particulate.rinseResidue_mg;

  // check the rounded sheet as the engine reduces it
  const candidate = assemble(seed, title, sheet);
  const solved: Record<string, number> = wholeRunReduction.solve(candidate).expected;
  const volume = meterVolume(sheet);
  const acceptable: boolean =
    inRange(solved.isokinetic_pct, ISOKINETIC_PCT) &&
    inRange(solved.moistureFraction, MOISTURE_FRACTION) &&
    solved.moistureFraction < SATURATION_MARGIN * saturationMoistureFraction(summary.stackTemp_F, absolutePressure) &&
    inRange(solved.velocity_fps, { min: 10, max: 100 }) &&
    inRange(volume, { min: 20, max: 150 });
  return acceptable ? candidate : undefined;
}

function assemble(seed: number, title: string, data: WholeRunData) {
  return scenario('whole-run-reduction', seed, {
    title,
    intro:
      'The complete field data sheet of one Method 5 run. Two ports, sampled for the same time at every point; CO2 and O2 are the run averages from the analyzers; the particulate catch is filter plus front-half rinse.',
    given: [
      given('stackDiameter_in', 'Stack inside diameter', data.stackDiameter_in, 'in.'),
      given('barometric_inHg', 'Barometric pressure', data.barometric_inHg, 'in. Hg'),
      given('staticPressure_inH2O', 'Stack static pressure, Pg', data.staticPressure_inH2O, 'in. H2O'),
      given('pitotCoefficient', 'Pitot coefficient, Cp', data.pitotCoefficient),
      given('nozzleDiameter_in', 'Nozzle diameter (calibrated), Dn', data.nozzleDiameter_in, 'in.'),
      given('minutesPerPoint', 'Sampling time at each point', data.minutesPerPoint, 'min'),
      given('meterInitial_ft3', 'Dry gas meter, initial reading', data.meterInitial_ft3, 'ft³'),
      given('meterFinal_ft3', 'Dry gas meter, final reading', data.meterFinal_ft3, 'ft³'),
      given('meterFactorY', 'Meter calibration factor, Y', data.meterFactorY),
      given('co2_pct', 'CO2, run average, dry basis', data.co2_pct, '%'),
      given('o2_pct', 'O2, run average, dry basis', data.o2_pct, '%'),
      given('silicaGelInitial_g', 'Silica gel, initial weight', data.silicaGelInitial_g, 'g'),
      given('silicaGelFinal_g', 'Silica gel, final weight', data.silicaGelFinal_g, 'g'),
      given('filterGain_mg', 'Filter, net weight gain', data.filterGain_mg, 'mg'),
      given('rinseResidue_mg', 'Probe and nozzle rinse, net residue (blank subtracted)', data.rinseResidue_mg, 'mg'),
    ],
    tables: [
      table(
        'traverse',
        'Sampling traverse',
        [
          column('port', 'Port'),
          column('point', 'Point'),
          column('deltaP_inH2O', 'Velocity head, Δp', 'in. H2O'),
          column('orificePressure_inH2O', 'Orifice ΔH', 'in. H2O'),
          column('stackTemp_F', 'Stack temperature', '°F'),
          column('meterInlet_F', 'Meter inlet', '°F'),
          column('meterOutlet_F', 'Meter outlet', '°F'),
        ],
        data.traverse.map((r) => [r.port, r.point, r.deltaP_inH2O, r.orificePressure_inH2O, r.stackTemp_F, r.meterInlet_F, r.meterOutlet_F]),
      ),
      impingerTable(data.impingers),
    ],
    data,
  });
}
