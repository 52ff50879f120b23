/** Method 7E (40 CFR Part 60, App. A-4): analyzer calibration error, system bias, drift, bias-corrected average. */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { InputError } from './errors';
import { fmt, type StepSpec, type Worksheet } from './worksheet';

/** Method 7E, §13.1: calibration error within ±2.0 % of span, or |C_Dir − C_v| ≤ 0.5 ppmv. */
const CALIBRATION_ERROR_LIMIT_PCT = 2.0;
/** Method 7E, §13.2: system bias within ±5.0 % of span, or |C_S − C_Dir| ≤ 0.5 ppmv. */
const SYSTEM_BIAS_LIMIT_PCT = 5.0;
/** Method 7E, §13.3: drift within 3.0 % of span, or |C_S,post − C_S,pre| ≤ 0.5 ppmv. */
const DRIFT_LIMIT_PCT = 3.0;
/** Method 7E, §13: the alternative absolute limit for every check above, ppmv. */
const ALTERNATIVE_LIMIT_PPMV = 0.5;
/**
 * Method 7E, §7.1 gas levels (from memory, check against the method text): low-level (zero) gas
 * under 20 % of the calibration span, mid-level 40–60 %, high-level equal to the span.
 */
const LOW_LEVEL_MAX_FRACTION = 0.2;
const MID_LEVEL_MIN_FRACTION = 0.4;
const MID_LEVEL_MAX_FRACTION = 0.6;

const within = (percent: number, difference: number, limitPct: number) =>
  Math.abs(percent) <= limitPct || Math.abs(difference) <= ALTERNATIVE_LIMIT_PPMV;

type Which = 'zero' | 'upscale';
type When = 'Pre' | 'Post';

function biasStep(which: Which, when: When): StepSpec {
  return {
    key: `${which}Bias${when}_pct`,
    label: `System bias, ${which === 'zero' ? 'zero' : 'upscale'} gas, ${when === 'Pre' ? 'before' : 'after'} the run`,
    equation: String.raw`SB = \frac{C_S - C_{Dir}}{CS} \times 100`,
    unit: '% of span',
    source: 'Method 7E, Eq. 7E-2',
    inputs: [`systemBias.${which}.${when === 'Pre' ? 'pre' : 'post'}`, 'span'],
  };
}

function driftStep(which: Which): StepSpec {
  return {
    key: `${which}Drift_pct`,
    label: `Drift, ${which} gas`,
    equation: String.raw`D = \left|SB_{final} - SB_{i}\right|`,
    unit: '% of span',
    source: 'Method 7E, Eq. 7E-4',
    dependsOn: [`${which}BiasPre_pct`, `${which}BiasPost_pct`],
  };
}

function passStep(key: string, label: string, equation: string, source: string, dependsOn: string[]): StepSpec {
  return { key, label, equation, unit: '', source, dependsOn };
}

export function analyzerChecks(input: CalculationInputParsed<'analyzer-checks'>, w: Worksheet) {
  const span = input.span;
  const gases = input.calibrationGases;

  const calibrationErrors: number[] = [];
  let calibrationPass = true;
  gases.forEach((gas, i) => {
    const error = w.number(
      {
        key: `calibrationError_pct.${i}`,
        label: `Calibration error, gas ${i + 1} (${fmt(gas.certified)} ppmv)`,
        equation: String.raw`ACE = \frac{C_{Dir} - C_V}{CS} \times 100`,
        unit: '% of span',
        source: 'Method 7E, Eq. 7E-1',
        inputs: [`calibrationGases.${i}.directResponse`, `calibrationGases.${i}.certified`, 'span'],
      },
      ((gas.directResponse - gas.certified) / span) * 100,
    );
    calibrationErrors.push(error);
    if (!within(error, gas.directResponse - gas.certified, CALIBRATION_ERROR_LIMIT_PCT)) {
      calibrationPass = false;
      w.warn(
        `Calibration error for gas ${i + 1} (${fmt(gas.certified)} ppmv) is ${fmt(error, 3)} % of span, beyond ±2.0 % and more than 0.5 ppmv off (Method 7E, §13.1): recalibrate and repeat the calibration error test.`,
      );
    }
  });
  w.flag(
    passStep(
      'calibrationErrorPass',
      'Every calibration error within ±2.0 % of span or 0.5 ppmv',
      String.raw`|ACE| \le 2.0\ \text{or}\ |C_{Dir} - C_V| \le 0.5`,
      'Method 7E, §13.1',
      gases.map((_, i) => `calibrationError_pct.${i}`),
    ),
    calibrationPass,
  );

  const results: Record<string, number | boolean | number[]> = {
    calibrationError_pct: calibrationErrors,
    calibrationErrorPass: calibrationPass,
  };

  let allPass = calibrationPass;
  const responses: Record<Which, { pre: number; post: number; certified: number }> = {
    zero: input.systemBias.zero,
    upscale: input.systemBias.upscale,
  };
  for (const which of ['zero', 'upscale'] as const) {
    const readings = responses[which];
    // Eq. 7E-2 compares against the analyzer's direct response to the same calibration gas.
    const direct = gases.find((g) => g.certified === readings.certified)?.directResponse as number;
    const biases: Record<When, number> = { Pre: 0, Post: 0 };
    for (const when of ['Pre', 'Post'] as const) {
      const reading = when === 'Pre' ? readings.pre : readings.post;
      const bias = w.number(biasStep(which, when), ((reading - direct) / span) * 100);
      biases[when] = bias;
      const passKey = `${which}Bias${when}Pass`;
      const pass = w.flag(
        passStep(
          passKey,
          `System bias, ${which} gas, ${when === 'Pre' ? 'before' : 'after'} the run, within ±5.0 % of span or 0.5 ppmv`,
          String.raw`|SB| \le 5.0\ \text{or}\ |C_S - C_{Dir}| \le 0.5`,
          'Method 7E, §13.2',
          [`${which}Bias${when}_pct`],
        ),
        within(bias, reading - direct, SYSTEM_BIAS_LIMIT_PCT),
      );
      results[`${which}Bias${when}_pct`] = bias;
      results[passKey] = pass;
      if (!pass) {
        allPass = false;
        w.warn(
          `System bias for the ${which} gas ${when === 'Pre' ? 'before' : 'after'} the run is ${fmt(bias, 3)} % of span, beyond ±5.0 % and more than 0.5 ppmv off (Method 7E, §13.2): the run is invalid; fix the sampling system and repeat it.`,
        );
      }
    }
    const drift = w.number(driftStep(which), Math.abs(biases.Post - biases.Pre));
    const driftPass = w.flag(
      passStep(
        `${which}DriftPass`,
        `Drift, ${which} gas, within 3.0 % of span or 0.5 ppmv`,
        String.raw`D \le 3.0\ \text{or}\ |C_{S,post} - C_{S,pre}| \le 0.5`,
        'Method 7E, §13.3',
        [`${which}Drift_pct`],
      ),
      within(drift, readings.post - readings.pre, DRIFT_LIMIT_PCT),
    );
    results[`${which}Drift_pct`] = drift;
    results[`${which}DriftPass`] = driftPass;
    if (!driftPass) {
      allPass = false;
      w.warn(
        `Drift for the ${which} gas is ${fmt(drift, 3)} % of span, beyond 3.0 % and more than 0.5 ppmv (Method 7E, §13.3): the run is valid, but a new calibration error test is needed before the next run.`,
      );
    }
  }

  const zero = input.systemBias.zero;
  const upscale = input.systemBias.upscale;
  const c0 = w.number(
    {
      key: 'zeroResponseAverage',
      label: 'Average of the pre- and post-run zero system responses, C0',
      equation: String.raw`C_0 = \frac{C_{S,pre} + C_{S,post}}{2}`,
      unit: 'ppmv',
      source: 'Method 7E, Eq. 7E-5b',
      inputs: ['systemBias.zero.pre', 'systemBias.zero.post'],
    },
    (zero.pre + zero.post) / 2,
  );
  const cm = w.number(
    {
      key: 'upscaleResponseAverage',
      label: 'Average of the pre- and post-run upscale system responses, CM',
      equation: String.raw`C_M = \frac{C_{S,pre} + C_{S,post}}{2}`,
      unit: 'ppmv',
      source: 'Method 7E, Eq. 7E-5b',
      inputs: ['systemBias.upscale.pre', 'systemBias.upscale.post'],
    },
    (upscale.pre + upscale.post) / 2,
  );
  if (cm === c0) {
    const message = 'gives an upscale response average equal to the zero response average, so the bias correction (Method 7E, Eq. 7E-5b) divides by zero';
    throw new InputError(
      ['systemBias.zero.pre', 'systemBias.zero.post', 'systemBias.upscale.pre', 'systemBias.upscale.post'].map((field) => ({
        field,
        message: `${field} ${message}`,
      })),
    );
  }
  const corrected = w.number(
    {
      key: 'biasCorrectedAverage',
      label: 'Run average corrected for bias, C_gas',
      equation: String.raw`C_{gas} = \left(\bar{C} - C_0\right)\frac{C_{MA}}{C_M - C_0}`,
      unit: 'ppmv',
      source: 'Method 7E, Eq. 7E-5b',
      dependsOn: ['zeroResponseAverage', 'upscaleResponseAverage'],
      inputs: ['runAverage', 'systemBias.upscale.certified'],
    },
    ((input.runAverage - c0) * upscale.certified) / (cm - c0),
  );
  allPass = w.flag(
    passStep(
      'allChecksPass',
      'Calibration error, system bias and drift all within limits',
      String.raw`\text{all checks pass}`,
      'Method 7E, §13',
      ['calibrationErrorPass', 'zeroBiasPrePass', 'zeroBiasPostPass', 'upscaleBiasPrePass', 'upscaleBiasPostPass', 'zeroDriftPass', 'upscaleDriftPass'],
    ),
    allPass,
  );

  warnGasLevels(span, gases.map((g) => g.certified), w);

  results.zeroResponseAverage = c0;
  results.upscaleResponseAverage = cm;
  results.biasCorrectedAverage = corrected;
  results.allChecksPass = allPass;
  return results;
}

function warnGasLevels(span: number, certified: number[], w: Worksheet): void {
  const sorted = [...certified].sort((a, b) => a - b);
  const low = sorted[0];
  const high = sorted[sorted.length - 1];
  if (low >= LOW_LEVEL_MAX_FRACTION * span) {
    w.warn(`The lowest calibration gas (${fmt(low)} ppmv) is not below 20 % of the span (Method 7E, §7.1).`);
  }
  if (Math.abs(high - span) > 1e-9 * span) {
    w.warn(`The highest calibration gas (${fmt(high)} ppmv) should equal the calibration span (${fmt(span)} ppmv) (Method 7E, §7.1).`);
  }
  const mids = sorted.slice(1, -1);
  if (!mids.some((c) => c >= MID_LEVEL_MIN_FRACTION * span && c <= MID_LEVEL_MAX_FRACTION * span)) {
    w.warn(`No calibration gas falls in the mid-level range of 40–60 % of the span (Method 7E, §7.1).`);
  }
}
