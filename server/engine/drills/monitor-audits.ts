/** Monitor audit drills: relative accuracy test audits (PS-2, Part 75 App. A bias test). */
import { calculate } from '../index';
import { defineDrill, numberAt, type EngineResults, type EngineRunner } from './define';
import { drawUntil, roundTo, type Draw } from './random';
import { column, given, scenario, siteName, table } from './sheet';

type Values = Readonly<Record<string, number>>;

interface RataRun {
  run: number;
  reference: number;
  monitor: number;
}

interface RataData {
  parameter: string;
  unit: string;
  runs: RataRun[];
}

const rataInputs = (d: RataData) => ({
  referenceValues: d.runs.map((r) => r.reference),
  monitorValues: d.runs.map((r) => r.monitor),
});

const rataStep = (key: string, overrides: (v: Values) => Record<string, number> = () => ({})) => (d: RataData, v: Values, engine: EngineRunner) =>
  numberAt(engine.run('relative-accuracy', rataInputs(d), { overrides: overrides(v) }), key);

const pick = (v: Values, keys: readonly string[]) => Object.fromEntries(keys.map((k) => [k, v[k]]));

interface Parameter {
  name: string;
  unit: string;
  level: [number, number];
  resolution: number;
}

const PARAMETERS: readonly Parameter[] = [
  { name: 'NOx', unit: 'ppmvd', level: [20, 300], resolution: 0.1 },
  { name: 'SO2', unit: 'ppmvd', level: [50, 800], resolution: 0.1 },
  { name: 'CO2', unit: '% dry', level: [6, 14], resolution: 0.01 },
  { name: 'NOx emission rate', unit: 'lb/MMBtu', level: [0.05, 0.6], resolution: 0.001 },
];

type BiasCase = 'low' | 'none' | 'high';

/**
 * 9 to 12 paired runs (PS-2). The monitor reads `bias` low on average (negative: high) with
 * run-to-run scatter; values read to the parameter's resolution.
 */
function drawRuns(draw: Draw, biasCase: BiasCase): RataData {
  const parameter = draw.pick(PARAMETERS);
  const level = draw.uniform(parameter.level[0], parameter.level[1]);
  const count = draw.int(9, 12);
  const bias = biasCase === 'low' ? draw.uniform(0.03, 0.1) : biasCase === 'high' ? -draw.uniform(0.02, 0.08) : draw.uniform(-0.01, 0.01);
  const scatter = draw.uniform(0.01, 0.04);
  const runs: RataRun[] = [];
  for (let run = 1; run <= count; run++) {
    const reference = level * draw.uniform(0.9, 1.1);
    const monitor = reference * (1 - bias) * (1 + draw.uniform(-scatter, scatter) * Math.sqrt(3));
    runs.push({ run, reference: roundTo(reference, parameter.resolution), monitor: roundTo(monitor, parameter.resolution) });
  }
  return { parameter: parameter.name, unit: parameter.unit, runs };
}

function rataScenario(templateId: string, seed: number, draw: Draw, data: RataData, intro: string) {
  return scenario(templateId, seed, {
    title: `${siteName(draw, ['boiler', 'turbine', 'kiln', 'incinerator'])}: ${data.parameter} monitor RATA`,
    intro,
    given: [
      given('parameter', 'Parameter', data.parameter),
      given('unit', 'Unit of the run values', data.unit),
      given('runCount', 'Runs used', data.runs.length),
    ],
    tables: [
      table(
        'runs',
        'Paired runs',
        [column('run', 'Run'), column('reference', 'Reference method', data.unit), column('monitor', 'Monitor (CEMS)', data.unit)],
        data.runs.map((r) => [r.run, r.reference, r.monitor]),
      ),
    ],
    data,
  });
}

/** Bias clearly present or clearly absent: the mean difference is not within 15 % of |CC| (common practice, no source). */
function biasIsClear(results: EngineResults): boolean {
  const mean = numberAt(results, 'meanDifference');
  const cc = Math.abs(numberAt(results, 'confidenceCoefficient'));
  return Math.abs(mean - cc) > 0.15 * cc;
}

// ---------------------------------------------------------------------------------------------
// rata-paired-differences

/** Σd and Σd² from the engine's own differences (PS-2, d = RM − CEMS). */
function sums(results: EngineResults) {
  const differences = results.differences as number[];
  let sum = 0;
  let squares = 0;
  for (const d of differences) {
    sum += d;
    squares += d * d;
  }
  return { sum, squares, n: differences.length };
}

export const rataPairedDifferences = defineDrill<RataData>({
  id: 'rata-paired-differences',
  area: 'monitor-audits',
  title: 'Paired differences of a RATA',
  summary: 'Tabulate the run differences, their sum and sum of squares, and work out the mean difference and its standard deviation.',
  methods: ['Performance Specification 2'],
  fields: [
    {
      key: 'sumOfDifferences',
      label: 'Sum of the differences, Σd (d = RM − CEMS)',
      unit: 'run units',
      source: 'PS-2, Eq. 2-1',
      compute: (d, _v, engine) => sums(engine.run('relative-accuracy', rataInputs(d))).sum,
    },
    {
      key: 'sumOfSquaredDifferences',
      label: 'Sum of the squared differences, Σd²',
      unit: 'run units²',
      source: 'PS-2, Eq. 2-2',
      compute: (d, _v, engine) => sums(engine.run('relative-accuracy', rataInputs(d))).squares,
    },
    {
      key: 'meanDifference',
      label: 'Mean difference, d̄',
      unit: 'run units',
      source: 'PS-2, Eq. 2-1',
      dependsOn: ['sumOfDifferences'],
      // the engine's mean, shifted by the trainee's error in Σd (d̄ = Σd/n)
      compute: (d, v, engine) => {
        const results = engine.run('relative-accuracy', rataInputs(d));
        const exact = sums(results);
        return numberAt(results, 'meanDifference') + (v.sumOfDifferences - exact.sum) / exact.n;
      },
    },
    {
      key: 'stdDevDifference',
      label: 'Standard deviation of the differences, Sd',
      unit: 'run units',
      source: 'PS-2, Eq. 2-2',
      dependsOn: ['sumOfDifferences', 'sumOfSquaredDifferences'],
      // the engine's Sd for the exact sums; from the trainee's own sums, Eq. 2-2 as published
      compute: (d, v, engine) => {
        const results = engine.run('relative-accuracy', rataInputs(d));
        const exact = sums(results);
        if (v.sumOfDifferences === exact.sum && v.sumOfSquaredDifferences === exact.squares) return numberAt(results, 'stdDevDifference');
        return Math.sqrt((v.sumOfSquaredDifferences - v.sumOfDifferences ** 2 / exact.n) / (exact.n - 1));
      },
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const data = drawRuns(draw, draw.pick<BiasCase>(['low', 'low', 'none', 'high']));
      calculate('relative-accuracy', rataInputs(data));
      return rataScenario('rata-paired-differences', seed, draw, data, 'Paired reference method and monitor results from a relative accuracy test audit. Start the arithmetic: the differences and their statistics.');
    }),
});

// ---------------------------------------------------------------------------------------------
// rata-relative-accuracy

export const rataRelativeAccuracy = defineDrill<RataData>({
  id: 'rata-relative-accuracy',
  area: 'monitor-audits',
  title: 'Relative accuracy of a monitor',
  summary: 'Work a RATA through to relative accuracy: mean reference value, mean difference, standard deviation, t value, confidence coefficient.',
  methods: ['Performance Specification 2'],
  fields: [
    { key: 'meanReference', label: 'Mean of the reference method values', unit: 'run units', source: 'PS-2, Eq. 2-4', compute: rataStep('meanReference') },
    { key: 'meanDifference', label: 'Mean difference, d̄ (d = RM − CEMS)', unit: 'run units', source: 'PS-2, Eq. 2-1', compute: rataStep('meanDifference') },
    {
      key: 'stdDevDifference',
      label: 'Standard deviation of the differences, Sd',
      unit: 'run units',
      source: 'PS-2, Eq. 2-2',
      dependsOn: ['meanDifference'],
      compute: rataStep('stdDevDifference', (v) => pick(v, ['meanDifference'])),
    },
    {
      key: 'tValue',
      label: 't0.975 for the number of runs',
      unit: '',
      source: 'PS-2, Table 2-1',
      // neighbouring table values differ by about 1.5 %: ask for the table value itself
      tolerancePct: 0.1,
      compute: rataStep('tValue'),
    },
    {
      key: 'confidenceCoefficient',
      label: 'Confidence coefficient, CC',
      unit: 'run units',
      source: 'PS-2, Eq. 2-3',
      dependsOn: ['stdDevDifference', 'tValue'],
      compute: rataStep('confidenceCoefficient', (v) => pick(v, ['stdDevDifference', 'tValue'])),
    },
    {
      key: 'relativeAccuracy_pct',
      label: 'Relative accuracy, RA',
      unit: '%',
      source: 'PS-2, Eq. 2-4',
      dependsOn: ['meanReference', 'meanDifference', 'confidenceCoefficient'],
      compute: rataStep('relativeAccuracy_pct', (v) => pick(v, ['meanReference', 'meanDifference', 'confidenceCoefficient'])),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const data = drawRuns(draw, draw.pick<BiasCase>(['low', 'none', 'high']));
      const ra = numberAt(calculate('relative-accuracy', rataInputs(data)).results, 'relativeAccuracy_pct');
      if (ra > 30) return undefined;
      return rataScenario('rata-relative-accuracy', seed, draw, data, 'Paired reference method and monitor results from a relative accuracy test audit. Work out the monitor’s relative accuracy.');
    }),
});

// ---------------------------------------------------------------------------------------------
// rata-bias-adjustment

export const rataBiasAdjustment = defineDrill<RataData>({
  id: 'rata-bias-adjustment',
  area: 'monitor-audits',
  title: 'Bias test and bias adjustment factor',
  summary: 'Decide whether the monitor reads low (d̄ greater than |CC|) and work out the bias adjustment factor, 1 when there is no bias.',
  methods: ['Part 75, Appendix A', 'Performance Specification 2'],
  fields: [
    { key: 'meanMonitor', label: 'Mean of the monitor values', unit: 'run units', source: 'Part 75, App. A, §7.6', compute: rataStep('meanMonitor') },
    { key: 'meanDifference', label: 'Mean difference, d̄ (d = RM − CEMS)', unit: 'run units', source: 'PS-2, Eq. 2-1', compute: rataStep('meanDifference') },
    {
      key: 'stdDevDifference',
      label: 'Standard deviation of the differences, Sd',
      unit: 'run units',
      source: 'PS-2, Eq. 2-2',
      dependsOn: ['meanDifference'],
      compute: rataStep('stdDevDifference', (v) => pick(v, ['meanDifference'])),
    },
    {
      key: 'confidenceCoefficient',
      label: 'Confidence coefficient, CC',
      unit: 'run units',
      source: 'PS-2, Eq. 2-3 and Table 2-1',
      dependsOn: ['stdDevDifference'],
      compute: rataStep('confidenceCoefficient', (v) => pick(v, ['stdDevDifference'])),
    },
    {
      key: 'biasAdjustmentFactor',
      label: 'Bias adjustment factor, BAF (1 if no bias)',
      unit: '',
      source: 'Part 75, App. A, §7.6.5',
      // reported to three decimals; 1 % would let 1.000 pass for a real bias
      tolerancePct: 0.1,
      dependsOn: ['meanMonitor', 'meanDifference', 'confidenceCoefficient'],
      compute: rataStep('biasAdjustmentFactor', (v) => pick(v, ['meanMonitor', 'meanDifference', 'confidenceCoefficient'])),
    },
  ],
  generate: (seed) =>
    drawUntil(seed, (draw) => {
      const data = drawRuns(draw, draw.pick<BiasCase>(['low', 'low', 'low', 'none', 'high']));
      const results = calculate('relative-accuracy', rataInputs(data)).results;
      if (!biasIsClear(results) || numberAt(results, 'relativeAccuracy_pct') > 30) return undefined;
      return rataScenario('rata-bias-adjustment', seed, draw, data, 'Paired reference method and monitor results from a relative accuracy test audit. Apply the bias test and work out the bias adjustment factor.');
    }),
});
