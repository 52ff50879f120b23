/**
 * Instrumental gas analysis drills: the Method 7E quality checks (also used by Methods 6C and 10).
 * Pollutant analyzers in ppmv only for now: the engine labels these steps in ppmv, so O2 and CO2
 * analyzers (Method 3A, in %) wait until its labels follow the analyzer's unit.
 */
import { calculate } from '../index';
import { defineDrill, numberAt, type EngineRunner, type FieldSpec } from './define';
import { drawUntil, roundTo, type Draw } from './random';
import { column, given, scenario, siteName, table } from './sheet';
import type { DrillScenario } from './types';

interface CalibrationGas {
  level: 'Low' | 'Mid' | 'High';
  certified: number;
  directResponse: number;
}

interface AnalyzerQaData {
  analyte: string;
  unit: string;
  span: number;
  gases: CalibrationGas[];
  upscaleLevel: 'Mid' | 'High';
  zeroPre: number;
  zeroPost: number;
  upscalePre: number;
  upscalePost: number;
  runAverage: number;
}

interface Analyte {
  name: string;
  unit: string;
  spans: readonly number[];
  resolution: number;
}

const GAS_ANALYTES: readonly Analyte[] = [
  { name: 'NOx', unit: 'ppmv', spans: [50, 100, 200, 250, 500], resolution: 0.1 },
  { name: 'SO2', unit: 'ppmv', spans: [100, 250, 500, 1000], resolution: 0.1 },
  { name: 'CO', unit: 'ppmv', spans: [100, 200, 500, 1000], resolution: 0.1 },
];

const checkInputs = (d: AnalyzerQaData) => {
  const zero = d.gases[0];
  const upscale = d.gases.find((g) => g.level === d.upscaleLevel) as CalibrationGas;
  return {
    span: d.span,
    calibrationGases: d.gases.map((g) => ({ certified: g.certified, directResponse: g.directResponse })),
    systemBias: {
      zero: { certified: zero.certified, pre: d.zeroPre, post: d.zeroPost },
      upscale: { certified: upscale.certified, pre: d.upscalePre, post: d.upscalePost },
    },
    runAverage: d.runAverage,
  };
};

/** Percent-of-span answers are reported to 0.01 % of span; half of that is allowed either way (common practice, no source). */
const PERCENT_OF_SPAN_TOLERANCE = 0.005;

const checkStep =
  (path: string, overrides: (v: Readonly<Record<string, number>>) => Record<string, number> = () => ({})) =>
  (d: AnalyzerQaData, v: Readonly<Record<string, number>>, engine: EngineRunner) =>
    numberAt(engine.run('analyzer-checks', checkInputs(d), { overrides: overrides(v) }), path);

/**
 * One run's analyzer QA record: a zero, mid (40–60 % of span) and high (= span) gas with the
 * analyzer's direct responses, pre- and post-run system responses to the zero and an upscale gas,
 * and the raw run average. Errors are drawn so most checks pass and some fail, as in the field.
 */
function drawQaRecord(draw: Draw, analytes: readonly Analyte[]): AnalyzerQaData | undefined {
  const analyte = draw.pick(analytes);
  const span = draw.pick(analyte.spans);
  const read = (value: number) => roundTo(value, analyte.resolution);
  const offPct = (maxPct: number) => (span * draw.uniform(-maxPct, maxPct)) / 100;
  const calibrationSpread = draw.chance(0.1) ? 3 : 1.8;
  const gases: CalibrationGas[] = [
    { level: 'Low', certified: 0, directResponse: read(offPct(0.8)) },
    { level: 'Mid', certified: read(span * draw.uniform(0.4, 0.6)), directResponse: 0 },
    { level: 'High', certified: span, directResponse: 0 },
  ];
  for (const gas of gases.slice(1)) gas.directResponse = read(gas.certified + offPct(calibrationSpread));
  const upscaleLevel = draw.chance(0.75) ? 'Mid' : 'High';
  const upscale = gases.find((g) => g.level === upscaleLevel) as CalibrationGas;
  const biasSpread = draw.chance(0.1) ? 6 : 3;
  const zeroPre = read(gases[0].directResponse + offPct(biasSpread));
  const upscalePre = read(upscale.directResponse + offPct(biasSpread));
  const data: AnalyzerQaData = {
    analyte: analyte.name,
    unit: analyte.unit,
    span,
    gases,
    upscaleLevel,
    zeroPre,
    zeroPost: read(zeroPre + offPct(2)),
    upscalePre,
    upscalePost: read(upscalePre + offPct(2)),
    runAverage: read(upscale.certified * draw.uniform(0.15, 0.95)),
  };
  // Eq. 7E-5b needs the upscale responses well clear of the zero responses
  const c0 = (data.zeroPre + data.zeroPost) / 2;
  const cm = (data.upscalePre + data.upscalePost) / 2;
  return cm - c0 > 0.2 * upscale.certified ? data : undefined;
}

function qaScenario(templateId: string, seed: number, draw: Draw, data: AnalyzerQaData, intro: string): DrillScenario<AnalyzerQaData> {
  const unit = data.unit;
  return scenario(templateId, seed, {
    title: `${siteName(draw)}: ${data.analyte} analyzer, run 2 QA record`,
    intro,
    given: [
      given('analyte', 'Analyzer', data.analyte),
      given('span', 'Calibration span', data.span, unit),
      given('upscaleLevel', 'Upscale gas used for the system checks', data.upscaleLevel),
      given('runAverage', 'Average analyzer reading over the run, C̄', data.runAverage, unit),
    ],
    tables: [
      table(
        'calibration',
        'Calibration error test (gases injected at the analyzer)',
        [column('level', 'Gas level'), column('certified', 'Certified value', unit), column('directResponse', 'Analyzer response', unit)],
        data.gases.map((g) => [g.level, g.certified, g.directResponse]),
      ),
      table(
        'systemChecks',
        'System checks (gases injected at the probe)',
        [column('gas', 'Gas'), column('pre', 'Before the run', unit), column('post', 'After the run', unit)],
        [
          ['Low', data.zeroPre, data.zeroPost],
          [data.upscaleLevel, data.upscalePre, data.upscalePost],
        ],
      ),
    ],
    data,
  });
}

function qaDrillGenerator(templateId: string, analytes: readonly Analyte[], intro: string) {
  return (seed: number) =>
    drawUntil(seed, (draw) => {
      const data = drawQaRecord(draw, analytes);
      if (!data) return undefined;
      calculate('analyzer-checks', checkInputs(data)); // refuse any record the engine would refuse
      return qaScenario(templateId, seed, draw, data, intro);
    });
}

const percentOfSpan = (key: string, label: string, source: string, compute: FieldSpec<AnalyzerQaData>['compute'], dependsOn?: string[]): FieldSpec<AnalyzerQaData> => ({
  key,
  label,
  unit: '% of span',
  source,
  absoluteTolerance: PERCENT_OF_SPAN_TOLERANCE,
  ...(dependsOn ? { dependsOn } : {}),
  compute,
});

export const calibrationError = defineDrill<AnalyzerQaData>({
  id: 'calibration-error',
  area: 'gas-analysis',
  title: 'Analyzer calibration error',
  summary: 'Work out the calibration error of each gas as a percent of span and judge it against ±2.0 %.',
  methods: ['Method 7E', 'Method 6C', 'Method 10'],
  fields: [
    percentOfSpan('calibrationErrorLow_pct', 'Calibration error, low (zero) gas', 'Method 7E, Eq. 7E-1', checkStep('calibrationError_pct.0')),
    percentOfSpan('calibrationErrorMid_pct', 'Calibration error, mid gas', 'Method 7E, Eq. 7E-1', checkStep('calibrationError_pct.1')),
    percentOfSpan('calibrationErrorHigh_pct', 'Calibration error, high gas', 'Method 7E, Eq. 7E-1', checkStep('calibrationError_pct.2')),
  ],
  generate: qaDrillGenerator(
    'calibration-error',
    GAS_ANALYTES,
    'The QA record of one test run. Start with the calibration error test: each gas injected straight into the analyzer.',
  ),
});

export const biasAndDrift = defineDrill<AnalyzerQaData>({
  id: 'bias-and-drift',
  area: 'gas-analysis',
  title: 'System bias and drift',
  summary: 'Work out system bias before and after the run for the zero and upscale gases, and the drift between them.',
  methods: ['Method 7E', 'Method 6C', 'Method 10'],
  fields: [
    percentOfSpan('zeroBiasPre_pct', 'System bias, zero gas, before the run', 'Method 7E, Eq. 7E-2', checkStep('zeroBiasPre_pct')),
    percentOfSpan('zeroBiasPost_pct', 'System bias, zero gas, after the run', 'Method 7E, Eq. 7E-2', checkStep('zeroBiasPost_pct')),
    percentOfSpan('upscaleBiasPre_pct', 'System bias, upscale gas, before the run', 'Method 7E, Eq. 7E-2', checkStep('upscaleBiasPre_pct')),
    percentOfSpan('upscaleBiasPost_pct', 'System bias, upscale gas, after the run', 'Method 7E, Eq. 7E-2', checkStep('upscaleBiasPost_pct')),
    percentOfSpan(
      'zeroDrift_pct',
      'Drift, zero gas',
      'Method 7E, Eq. 7E-4',
      checkStep('zeroDrift_pct', (v) => ({ zeroBiasPre_pct: v.zeroBiasPre_pct, zeroBiasPost_pct: v.zeroBiasPost_pct })),
      ['zeroBiasPre_pct', 'zeroBiasPost_pct'],
    ),
    percentOfSpan(
      'upscaleDrift_pct',
      'Drift, upscale gas',
      'Method 7E, Eq. 7E-4',
      checkStep('upscaleDrift_pct', (v) => ({ upscaleBiasPre_pct: v.upscaleBiasPre_pct, upscaleBiasPost_pct: v.upscaleBiasPost_pct })),
      ['upscaleBiasPre_pct', 'upscaleBiasPost_pct'],
    ),
  ],
  generate: qaDrillGenerator(
    'bias-and-drift',
    GAS_ANALYTES,
    'The QA record of one test run. The system checks send the zero and upscale gases through the whole sampling system, before and after the run.',
  ),
});

/** Averages of two readings at 0.1 ppmv are exact to 0.05 ppmv; allow a trace of rounding (common practice, no source). */
const RESPONSE_AVERAGE_TOLERANCE_PPMV = 0.01;

export const biasCorrectedAverage = defineDrill<AnalyzerQaData>({
  id: 'bias-corrected-average',
  area: 'gas-analysis',
  title: 'Bias-corrected run average',
  summary: 'Average the zero and upscale system responses and correct the run average for system bias.',
  methods: ['Method 7E', 'Method 6C', 'Method 10'],
  fields: [
    {
      key: 'zeroResponseAverage',
      label: 'Average zero system response, C0',
      unit: 'ppmv',
      source: 'Method 7E, Eq. 7E-5b',
      absoluteTolerance: RESPONSE_AVERAGE_TOLERANCE_PPMV,
      compute: checkStep('zeroResponseAverage'),
    },
    {
      key: 'upscaleResponseAverage',
      label: 'Average upscale system response, CM',
      unit: 'ppmv',
      source: 'Method 7E, Eq. 7E-5b',
      absoluteTolerance: RESPONSE_AVERAGE_TOLERANCE_PPMV,
      compute: checkStep('upscaleResponseAverage'),
    },
    {
      key: 'biasCorrectedAverage',
      label: 'Bias-corrected run average, C_gas',
      unit: 'ppmv',
      source: 'Method 7E, Eq. 7E-5b',
      dependsOn: ['zeroResponseAverage', 'upscaleResponseAverage'],
      compute: checkStep('biasCorrectedAverage', (v) => ({
        zeroResponseAverage: v.zeroResponseAverage,
        upscaleResponseAverage: v.upscaleResponseAverage,
      })),
    },
  ],
  generate: qaDrillGenerator(
    'bias-corrected-average',
    GAS_ANALYTES,
    'The QA record of one test run. The run average is the raw analyzer reading; correct it for the system bias seen before and after the run.',
  ),
});
