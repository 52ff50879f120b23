/** Flow and moisture drills (Methods 1–4). */
import type { CalculationInput } from '../../../shared/calculations/schemas';
import { calculate } from '../index';
import { defineDrill, numberAt, type EngineRunner } from './define';
import {
  drawBarometric,
  drawMeterFactor,
  drawPitotCoefficient,
  drawStaticPressure,
  drawTraverse,
  inRange,
  MOISTURE_FRACTION,
  SATURATION_MARGIN,
  saturationMoistureFraction,
  STACK_DIAMETER_IN,
  STACK_TEMP_F,
  type TraverseReading,
} from './field-values';
import { drawUntil, mean, roundTo, type Draw } from './random';
import { column, given, scenario, siteName, table } from './sheet';

// ---------------------------------------------------------------------------------------------
// traverse-layout: probe marks for an equal-area traverse (Method 1, Table 1-2 and §11.3.2.1)

interface TraverseLayoutData {
  stackDiameter_in: number;
  pointsPerDiameter: number;
  portLength_in: number;
}

const layoutInputs = (d: TraverseLayoutData) => ({
  stackDiameter_in: d.stackDiameter_in,
  pointsPerDiameter: d.pointsPerDiameter,
  portLength_in: d.portLength_in,
});

const probeMark = (index: (d: TraverseLayoutData) => number) => (d: TraverseLayoutData, _v: unknown, engine: EngineRunner) =>
  numberAt(engine.run('traverse-points', layoutInputs(d)), `points.${index(d) - 1}.distanceFromPortEnd_in`);

export const traverseLayout = defineDrill<TraverseLayoutData>({
  id: 'traverse-layout',
  area: 'flow-moisture',
  title: 'Marking the probe for a traverse',
  summary: 'Place equal-area traverse points on one diameter and mark the probe from the port end, moving points that crowd the wall.',
  methods: ['Method 1'],
  fields: [
    { key: 'point1_distanceFromPortEnd_in', label: 'Point 1: probe mark from the outer end of the port', unit: 'in.', source: 'Method 1, Table 1-2 and §11.3.2.1', compute: probeMark(() => 1) },
    { key: 'point2_distanceFromPortEnd_in', label: 'Point 2: probe mark from the outer end of the port', unit: 'in.', source: 'Method 1, Table 1-2 and §11.3.2.1', compute: probeMark(() => 2) },
    { key: 'point3_distanceFromPortEnd_in', label: 'Point 3: probe mark from the outer end of the port', unit: 'in.', source: 'Method 1, Table 1-2 and §11.3.2.1', compute: probeMark(() => 3) },
    { key: 'lastPoint_distanceFromPortEnd_in', label: 'Last point on the diameter: probe mark from the outer end of the port', unit: 'in.', source: 'Method 1, Table 1-2 and §11.3.2.1', compute: probeMark((d) => d.pointsPerDiameter) },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const small = draw.chance(0.3);
      const crowded = !small && draw.chance(0.4);
      const stackDiameter_in = small
        ? draw.reading(STACK_DIAMETER_IN.min, 24, 0.25)
        : crowded
          ? draw.reading(25, 48, 0.5)
          : draw.reading(24.5, STACK_DIAMETER_IN.max, 0.5);
      const pointsPerDiameter = small ? draw.pick([8, 12]) : draw.pick([6, 8, 10, 12]);
      const portLength_in = draw.reading(2, 14, 0.25);
      const data = { stackDiameter_in, pointsPerDiameter, portLength_in };
      return scenario('traverse-layout', seed, {
        title: `${siteName(draw)}: traverse layout`,
        intro:
          'Two ports 90° apart on a round stack. Work out where to mark the probe for the first three points and the last point of one diameter, measured from the outer end of the port.',
        given: [
          given('stackDiameter_in', 'Stack inside diameter', stackDiameter_in, 'in.'),
          given('pointsPerDiameter', 'Traverse points on each diameter', pointsPerDiameter),
          given('portLength_in', 'Port length, outer end of the port to the inside wall', portLength_in, 'in.'),
        ],
        data,
      });
    }),
});

// ---------------------------------------------------------------------------------------------
// moisture-train: Method 4 moisture from impinger and silica gel gains and the dry gas meter

export interface ImpingerReading {
  impinger: number;
  contents: string;
  initial_ml: number;
  final_ml: number;
}

export interface MeterRun {
  meterInitial_ft3: number;
  meterFinal_ft3: number;
  meterFactorY: number;
  barometric_inHg: number;
  orificePressure_inH2O: number;
  meterTemp_F: number;
}

interface MoistureTrainData extends MeterRun {
  impingers: ImpingerReading[];
  silicaGelInitial_g: number;
  silicaGelFinal_g: number;
  stackTemp_F: number;
  absoluteStackPressure_inHg: number;
}

/** Gains and the metered volume as a crew works them out: final minus initial, at the reading's resolution. */
export const condensateGain = (impingers: readonly ImpingerReading[]) =>
  roundTo(impingers.reduce((sum, i) => sum + (i.final_ml - i.initial_ml), 0), 0.1);
export const meterVolume = (m: Pick<MeterRun, 'meterInitial_ft3' | 'meterFinal_ft3'>) => roundTo(m.meterFinal_ft3 - m.meterInitial_ft3, 0.001);

const moistureTrainInputs = (d: MoistureTrainData) => ({
  condensateGain_ml: condensateGain(d.impingers),
  silicaGelGain_g: roundTo(d.silicaGelFinal_g - d.silicaGelInitial_g, 0.1),
  meterVolume_ft3: meterVolume(d),
  meterFactorY: d.meterFactorY,
  barometric_inHg: d.barometric_inHg,
  orificePressure_inH2O: d.orificePressure_inH2O,
  meterTemp_F: d.meterTemp_F,
  stackTemp_F: d.stackTemp_F,
  absoluteStackPressure_inHg: d.absoluteStackPressure_inHg,
});

/** Shares of the condensed water by impinger: most in the first, little in the third. */
export function splitCondensate(draw: Draw, total_ml: number): number[] {
  const first = draw.uniform(0.7, 0.85);
  const second = draw.uniform(0.1, 0.2);
  const gains = [total_ml * first, total_ml * second];
  gains.push(Math.max(0, total_ml - gains[0] - gains[1]));
  return gains.map((g) => roundTo(g, 0.1));
}

/** Standard Method 4/5 charge: 100 ml water in impingers 1 and 2, the third empty. */
export const IMPINGER_CHARGE_ML = [100, 100, 0] as const;

export function impingerSheet(gains: readonly number[]): ImpingerReading[] {
  return gains.map((gain, i) => ({
    impinger: i + 1,
    contents: IMPINGER_CHARGE_ML[i] > 0 ? 'Water' : 'Empty',
    initial_ml: IMPINGER_CHARGE_ML[i],
    final_ml: roundTo(IMPINGER_CHARGE_ML[i] + gain, 0.1),
  }));
}

export const impingerTable = (impingers: readonly ImpingerReading[]) =>
  table(
    'impingers',
    'Impinger liquid',
    [column('impinger', 'Impinger'), column('contents', 'Contents'), column('initial_ml', 'Initial', 'ml'), column('final_ml', 'Final', 'ml')],
    impingers.map((i) => [i.impinger, i.contents, i.initial_ml, i.final_ml]),
  );

export const meterGivens = (m: MeterRun) => [
  given('meterInitial_ft3', 'Dry gas meter, initial reading', m.meterInitial_ft3, 'ft³'),
  given('meterFinal_ft3', 'Dry gas meter, final reading', m.meterFinal_ft3, 'ft³'),
  given('meterFactorY', 'Meter calibration factor, Y', m.meterFactorY),
  given('orificePressure_inH2O', 'Average orifice pressure differential, ΔH', m.orificePressure_inH2O, 'in. H2O'),
  given('meterTemp_F', 'Average dry gas meter temperature', m.meterTemp_F, '°F'),
  given('barometric_inHg', 'Barometric pressure', m.barometric_inHg, 'in. Hg'),
];

export const moistureTrain = defineDrill<MoistureTrainData>({
  id: 'moisture-train',
  area: 'flow-moisture',
  title: 'Moisture from the impinger train',
  summary: 'Turn impinger and silica gel gains and the dry gas meter readings into water vapor, dry standard volume and the moisture fraction.',
  methods: ['Method 4'],
  fields: [
    {
      key: 'waterVaporStd_scf',
      label: 'Water vapor collected, at standard conditions, Vw(std)',
      unit: 'scf',
      source: 'Method 4, Eqs. 4-1 and 4-2',
      compute: (d, _v, engine) => numberAt(engine.run('moisture', moistureTrainInputs(d)), 'waterVaporStd_scf'),
    },
    {
      key: 'meterVolumeStd_dscf',
      label: 'Dry gas metered, at standard conditions, Vm(std)',
      unit: 'dscf',
      source: 'Method 4, Eq. 4-3',
      compute: (d, _v, engine) => numberAt(engine.run('moisture', moistureTrainInputs(d)), 'meterVolumeStd_dscf'),
    },
    {
      key: 'moistureFraction',
      label: 'Moisture fraction, Bws',
      unit: '(fraction)',
      source: 'Method 4, Eq. 4-4',
      dependsOn: ['waterVaporStd_scf', 'meterVolumeStd_dscf'],
      compute: (d, v, engine) =>
        numberAt(
          engine.run('moisture', moistureTrainInputs(d), {
            overrides: { waterVaporStd_scf: v.waterVaporStd_scf, meterVolumeStd_dscf: v.meterVolumeStd_dscf },
          }),
          'moistureFraction',
        ),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const stackTemp_F = draw.reading(STACK_TEMP_F.min, STACK_TEMP_F.max, 1);
      const barometric_inHg = drawBarometric(draw);
      const absoluteStackPressure_inHg = roundTo(barometric_inHg + draw.uniform(-0.15, 0.15), 0.01);
      const saturation = saturationMoistureFraction(stackTemp_F, absoluteStackPressure_inHg);
      const target = draw.uniform(MOISTURE_FRACTION.min, Math.min(MOISTURE_FRACTION.max, SATURATION_MARGIN * saturation));
      if (target < MOISTURE_FRACTION.min) return undefined;

      const meter: MeterRun = {
        meterInitial_ft3: draw.reading(100, 900, 0.001),
        meterFinal_ft3: 0,
        meterFactorY: drawMeterFactor(draw),
        barometric_inHg,
        orificePressure_inH2O: draw.reading(0.5, 3, 0.01),
        meterTemp_F: draw.reading(50, 110, 1),
      };
      meter.meterFinal_ft3 = roundTo(meter.meterInitial_ft3 + draw.uniform(20, 60), 0.001);

      const water = waterForMoisture(draw, meter, target);
      const data: MoistureTrainData = {
        ...meter,
        impingers: impingerSheet(splitCondensate(draw, water.condensate_ml)),
        silicaGelInitial_g: water.silicaGelInitial_g,
        silicaGelFinal_g: water.silicaGelFinal_g,
        stackTemp_F,
        absoluteStackPressure_inHg,
      };
      const check = moistureCheck(moistureTrainInputs(data));
      if (!check) return undefined;

      return scenario('moisture-train', seed, {
        title: `${siteName(draw)}: moisture run`,
        intro: 'A Method 4 moisture train was run at the stack. Work out the water vapor, the dry standard volume sampled and the moisture fraction.',
        given: [
          ...meterGivens(data),
          given('silicaGelInitial_g', 'Silica gel, initial weight', data.silicaGelInitial_g, 'g'),
          given('silicaGelFinal_g', 'Silica gel, final weight', data.silicaGelFinal_g, 'g'),
          given('stackTemp_F', 'Average stack temperature', stackTemp_F, '°F'),
          given('absoluteStackPressure_inHg', 'Absolute stack pressure', absoluteStackPressure_inHg, 'in. Hg'),
        ],
        tables: [impingerTable(data.impingers)],
        data,
      });
    }),
});

/**
 * Water to collect for a target moisture fraction, by scaling a trial through the engine (water
 * vapor volume is proportional to the gains, Method 4, Eqs. 4-1 and 4-2), split between the
 * impingers and 3–10 % in the silica gel. Gains are rounded to 0.1 ml and 0.1 g.
 */
export function waterForMoisture(draw: Draw, meter: MeterRun, targetBws: number) {
  const trial = engineMoisture({ ...meterInputs(meter), condensateGain_ml: 100, silicaGelGain_g: 100 });
  const vwPerMl = numberAt(trial, 'condensateVaporStd_scf') / 100;
  const vwPerG = numberAt(trial, 'silicaGelVaporStd_scf') / 100;
  const water_scf = (targetBws / (1 - targetBws)) * numberAt(trial, 'meterVolumeStd_dscf');
  const gelShare = draw.uniform(0.03, 0.1);
  const silicaGelInitial_g = draw.reading(200, 300, 0.1);
  return {
    condensate_ml: roundTo((water_scf * (1 - gelShare)) / vwPerMl, 0.1),
    silicaGelInitial_g,
    silicaGelFinal_g: roundTo(silicaGelInitial_g + (water_scf * gelShare) / vwPerG, 0.1),
  };
}

export const meterInputs = (m: MeterRun) => ({
  meterVolume_ft3: meterVolume(m),
  meterFactorY: m.meterFactorY,
  barometric_inHg: m.barometric_inHg,
  orificePressure_inH2O: m.orificePressure_inH2O,
  meterTemp_F: m.meterTemp_F,
});

const engineMoisture = (inputs: CalculationInput<'moisture'>) => calculate('moisture', inputs).results;

/** The measured moisture is within 2–35 % and below saturation at stack conditions. */
function moistureCheck(inputs: ReturnType<typeof moistureTrainInputs>): boolean {
  const r = calculate('moisture', inputs).results;
  const bws = numberAt(r, 'moistureFraction');
  return inRange(bws, MOISTURE_FRACTION) && bws < SATURATION_MARGIN * numberAt(r, 'saturationMoistureFraction');
}

// ---------------------------------------------------------------------------------------------
// velocity-flow: Method 2 velocity and dry standard flow from a traverse

interface VelocityFlowData {
  stackDiameter_in: number;
  pitotCoefficient: number;
  barometric_inHg: number;
  staticPressure_inH2O: number;
  dryMolecularWeight: number;
  moistureFraction: number;
  traverse: TraverseReading[];
}

const flowInputs = (d: VelocityFlowData) => ({
  deltaP_inH2O: d.traverse.map((r) => r.deltaP_inH2O),
  stackTemp_F: d.traverse.map((r) => r.stackTemp_F),
  barometric_inHg: d.barometric_inHg,
  staticPressure_inH2O: d.staticPressure_inH2O,
  pitotCoefficient: d.pitotCoefficient,
  dryMolecularWeight: d.dryMolecularWeight,
  moistureFraction: d.moistureFraction,
  stackDiameter_in: d.stackDiameter_in,
});

export const traverseTable = (rows: readonly TraverseReading[]) =>
  table(
    'traverse',
    'Velocity traverse',
    [column('port', 'Port'), column('point', 'Point'), column('deltaP_inH2O', 'Velocity head, Δp', 'in. H2O'), column('stackTemp_F', 'Stack temperature', '°F')],
    rows.map((r) => [r.port, r.point, r.deltaP_inH2O, r.stackTemp_F]),
  );

const flowStep = (key: string, overrides: (v: Readonly<Record<string, number>>) => Record<string, number> = () => ({})) =>
  (d: VelocityFlowData, v: Readonly<Record<string, number>>, engine: EngineRunner) =>
    numberAt(engine.run('stack-flow', flowInputs(d), { overrides: overrides(v) }), key);

export const velocityFlow = defineDrill<VelocityFlowData>({
  id: 'velocity-flow',
  area: 'flow-moisture',
  title: 'Velocity and dry standard flow',
  summary: 'Reduce a pitot traverse to average velocity and dry standard flow, averaging the square roots of Δp.',
  methods: ['Method 2'],
  fields: [
    {
      key: 'meanSqrtDeltaP',
      label: 'Average of the square roots of Δp',
      unit: '(in. H2O)^½',
      source: 'Method 2, Eq. 2-9',
      // the root of the mean Δp, the shortcut Eq. 2-9 rules out, is typically 0.7–1.3 % higher:
      // a tolerance under that tells the two apart (common practice, no source)
      tolerancePct: 0.25,
      compute: flowStep('meanSqrtDeltaP'),
    },
    { key: 'absoluteStackTemp_R', label: 'Average absolute stack temperature, Ts', unit: '°R', source: 'Method 2, §12', compute: flowStep('absoluteStackTemp_R') },
    { key: 'absoluteStackPressure_inHg', label: 'Absolute stack pressure, Ps', unit: 'in. Hg', source: 'Method 2, §12', compute: flowStep('absoluteStackPressure_inHg') },
    { key: 'wetMolecularWeight', label: 'Molecular weight, wet basis, Ms', unit: 'lb/lb-mol', source: 'Method 2, Eq. 2-5', compute: flowStep('wetMolecularWeight') },
    {
      key: 'velocity_fps',
      label: 'Average stack gas velocity, vs',
      unit: 'ft/s',
      source: 'Method 2, Eq. 2-9',
      dependsOn: ['meanSqrtDeltaP', 'absoluteStackTemp_R', 'absoluteStackPressure_inHg', 'wetMolecularWeight'],
      compute: flowStep('velocity_fps', (v) => ({
        meanSqrtDeltaP: v.meanSqrtDeltaP,
        absoluteStackTemp_R: v.absoluteStackTemp_R,
        absoluteStackPressure_inHg: v.absoluteStackPressure_inHg,
        wetMolecularWeight: v.wetMolecularWeight,
      })),
    },
    { key: 'stackArea_ft2', label: 'Stack cross-sectional area, A', unit: 'ft²', source: 'Geometry (circle)', compute: flowStep('stackArea_ft2') },
    {
      key: 'dryStdFlow_dscfm',
      label: 'Dry standard flow rate, Qsd',
      unit: 'dscfm',
      source: 'Method 2, Eq. 2-10',
      dependsOn: ['velocity_fps', 'stackArea_ft2', 'absoluteStackPressure_inHg', 'absoluteStackTemp_R'],
      compute: flowStep('dryStdFlow_dscfm', (v) => ({
        absoluteStackPressure_inHg: v.absoluteStackPressure_inHg,
        absoluteStackTemp_R: v.absoluteStackTemp_R,
        velocity_fps: v.velocity_fps,
        stackArea_ft2: v.stackArea_ft2,
      })),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const stackDiameter_in = draw.reading(STACK_DIAMETER_IN.min, STACK_DIAMETER_IN.max, 0.5);
      const pointsPerDiameter = stackDiameter_in <= 24 ? draw.pick([4, 6, 8]) : draw.pick([6, 8, 10, 12]);
      const traverse = drawTraverse(draw, pointsPerDiameter, draw.logUniform(0.08, 1.8), draw.reading(STACK_TEMP_F.min, STACK_TEMP_F.max, 1));
      const data: VelocityFlowData = {
        stackDiameter_in,
        pitotCoefficient: drawPitotCoefficient(draw),
        barometric_inHg: drawBarometric(draw),
        staticPressure_inH2O: drawStaticPressure(draw),
        dryMolecularWeight: draw.reading(29.0, 30.7, 0.01),
        moistureFraction: draw.reading(MOISTURE_FRACTION.min, MOISTURE_FRACTION.max, 0.001),
        traverse,
      };
      const r = calculate('stack-flow', flowInputs(data)).results;
      const saturation = saturationMoistureFraction(mean(traverse.map((t) => t.stackTemp_F)), numberAt(r, 'absoluteStackPressure_inHg'));
      if (data.moistureFraction >= SATURATION_MARGIN * saturation) return undefined;
      if (!inRange(numberAt(r, 'velocity_fps'), { min: 10, max: 100 })) return undefined;

      return scenario('velocity-flow', seed, {
        title: `${siteName(draw)}: velocity traverse`,
        intro:
          'A Type S pitot traverse across two diameters of a round stack. Molecular weight and moisture come from the run’s gas analysis and moisture train. Work the readings through to dry standard flow.',
        given: [
          given('stackDiameter_in', 'Stack inside diameter', stackDiameter_in, 'in.'),
          given('pitotCoefficient', 'Pitot coefficient, Cp', data.pitotCoefficient),
          given('barometric_inHg', 'Barometric pressure', data.barometric_inHg, 'in. Hg'),
          given('staticPressure_inH2O', 'Stack static pressure, Pg', data.staticPressure_inH2O, 'in. H2O'),
          given('dryMolecularWeight', 'Dry molecular weight, Md', data.dryMolecularWeight, 'lb/lb-mol'),
          given('moistureFraction', 'Moisture fraction, Bws', data.moistureFraction),
        ],
        tables: [traverseTable(traverse)],
        data,
      });
    }),
});

// ---------------------------------------------------------------------------------------------
// gas-molecular-weight: Method 3 dry and wet molecular weight from Orsat analyses

interface OrsatAnalysis {
  co2_pct: number;
  o2_pct: number;
  co_pct: number;
}

interface GasMolecularWeightData {
  analyses: OrsatAnalysis[];
  moistureFraction: number;
}

const compositionInputs = (d: GasMolecularWeightData) => ({
  co2_pct: mean(d.analyses.map((a) => a.co2_pct)),
  o2_pct: mean(d.analyses.map((a) => a.o2_pct)),
  co_pct: mean(d.analyses.map((a) => a.co_pct)),
  moistureFraction: d.moistureFraction,
});

export const gasMolecularWeight = defineDrill<GasMolecularWeightData>({
  id: 'gas-molecular-weight',
  area: 'flow-moisture',
  title: 'Molecular weight of the stack gas',
  summary: 'Average three Orsat analyses, find nitrogen by difference, then the dry and wet molecular weights.',
  methods: ['Method 3', 'Method 2'],
  fields: [
    {
      key: 'n2_pct',
      label: 'Nitrogen by difference, dry basis',
      unit: '%',
      source: 'Method 3, §12',
      compute: (d, _v, engine) => numberAt(engine.run('gas-composition', compositionInputs(d)), 'n2_pct'),
    },
    {
      key: 'dryMolecularWeight',
      label: 'Dry molecular weight, Md',
      unit: 'lb/lb-mol',
      source: 'Method 3, §12',
      dependsOn: ['n2_pct'],
      compute: (d, v, engine) =>
        numberAt(engine.run('gas-composition', compositionInputs(d), { overrides: { n2_pct: v.n2_pct } }), 'dryMolecularWeight'),
    },
    {
      key: 'wetMolecularWeight',
      label: 'Molecular weight, wet basis, Ms',
      unit: 'lb/lb-mol',
      source: 'Method 2, Eq. 2-5',
      dependsOn: ['dryMolecularWeight'],
      compute: (d, v, engine) =>
        numberAt(
          engine.run('gas-composition', compositionInputs(d), { overrides: { dryMolecularWeight: v.dryMolecularWeight } }),
          'wetMolecularWeight',
        ),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const o2 = draw.uniform(2.1, 15.9);
      const co2 = Math.max(0.6, draw.uniform(11.7, 19.5) * ((20.9 - o2) / 20.9));
      const co = draw.chance(0.7) ? 0 : draw.uniform(0.1, 0.3);
      // three analyses that agree within a few tenths, as Method 3 asks before averaging
      const analyses = [0, 1, 2].map(() => ({
        co2_pct: roundTo(co2 + draw.uniform(-0.15, 0.15), 0.1),
        o2_pct: roundTo(o2 + draw.uniform(-0.15, 0.15), 0.1),
        co_pct: co === 0 ? 0 : roundTo(co + draw.uniform(-0.05, 0.05), 0.1),
      }));
      const data = { analyses, moistureFraction: draw.reading(MOISTURE_FRACTION.min, MOISTURE_FRACTION.max, 0.001) };
      return scenario('gas-molecular-weight', seed, {
        title: `${siteName(draw)}: Orsat analyses`,
        intro: 'Three Orsat analyses of the integrated bag sample, and the moisture fraction from the run’s moisture train.',
        given: [given('moistureFraction', 'Moisture fraction, Bws', data.moistureFraction)],
        tables: [
          table(
            'orsat',
            'Orsat analyses, dry basis',
            [column('analysis', 'Analysis'), column('co2_pct', 'CO2', '%'), column('o2_pct', 'O2', '%'), column('co_pct', 'CO', '%')],
            analyses.map((a, i) => [i + 1, a.co2_pct, a.o2_pct, a.co_pct]),
          ),
        ],
        data,
      });
    }),
});
