/**
 * Performance Specification 2 (40 CFR Part 60, App. B): relative accuracy of a CEMS against the
 * reference method, with the Part 75 App. A bias test and bias adjustment factor.
 * PS-2 equation numbers 2-1 to 2-4 are from memory; check them against the specification.
 */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { inputError } from './errors';
import { fmt, type Worksheet } from './worksheet';

/**
 * PS-2, Table 2-1: t0.975 by the number of runs n (already for n − 1 degrees of freedom).
 * Values from the table as we remember it; the unit tests check each against jStat's Student-t inverse.
 */
export const T_975_BY_RUNS: Readonly<Record<number, number>> = {
  2: 12.706,
  3: 4.303,
  4: 3.182,
  5: 2.776,
  6: 2.571,
  7: 2.447,
  8: 2.365,
  9: 2.306,
  10: 2.262,
  11: 2.228,
  12: 2.201,
  13: 2.179,
  14: 2.16,
  15: 2.145,
  16: 2.131,
};

/** PS-2, §13.2 (from memory): RA no more than 20 % of the mean reference value (another limit based on the standard may apply). */
const RELATIVE_ACCURACY_LIMIT_PCT = 20;

const MEAN_DIFFERENCE_STEP_BASE = {
  key: 'meanDifference',
  label: 'Mean difference, d̄',
  equation: String.raw`\bar{d} = \frac{1}{n}\sum_{i=1}^{n} d_i`,
  unit: 'same as the run values',
  source: 'PS-2, Eq. 2-1',
} as const;

export function relativeAccuracy(input: CalculationInputParsed<'relative-accuracy'>, w: Worksheet) {
  const rm = input.referenceValues;
  const cems = input.monitorValues;
  const n = rm.length;

  const differences: number[] = [];
  const differenceKeys: string[] = [];
  for (let i = 0; i < n; i++) {
    const key = `differences.${i}`;
    differenceKeys.push(key);
    differences.push(
      w.number(
        {
          key,
          label: `Difference, run ${i + 1}`,
          equation: String.raw`d_{${i + 1}} = RM_{${i + 1}} - CEMS_{${i + 1}}`,
          unit: 'same as the run values',
          source: 'PS-2, §12 (d = RM − CEMS)',
          inputs: [`referenceValues.${i}`, `monitorValues.${i}`],
        },
        rm[i] - cems[i],
      ),
    );
  }

  let sum = 0;
  for (const d of differences) sum += d;
  const mean = w.number({ ...MEAN_DIFFERENCE_STEP_BASE, dependsOn: differenceKeys }, sum / n);

  // Same value as the published Σd² − (Σd)²/n form, summed about the mean so that nearly equal
  // differences cannot cancel into a tiny negative number under the root.
  let squares = 0;
  for (const d of differences) squares += (d - mean) * (d - mean);
  const sd = w.number(
    {
      key: 'stdDevDifference',
      label: 'Standard deviation of the differences, Sd',
      equation: String.raw`S_d = \sqrt{\frac{\sum d_i^2 - \frac{\left(\sum d_i\right)^2}{n}}{n - 1}}`,
      unit: 'same as the run values',
      source: 'PS-2, Eq. 2-2',
      dependsOn: [...differenceKeys, 'meanDifference'],
    },
    Math.sqrt(squares / (n - 1)),
  );

  const t = w.number(
    {
      key: 'tValue',
      label: `t0.975 for ${n} runs`,
      equation: String.raw`t_{0.975},\ n = ${n}`,
      unit: '',
      source: 'PS-2, Table 2-1',
      inputs: ['referenceValues', 'monitorValues'],
    },
    T_975_BY_RUNS[n],
  );

  const cc = w.number(
    {
      key: 'confidenceCoefficient',
      label: '2.5 % error confidence coefficient, CC',
      equation: String.raw`CC = t_{0.975}\,\frac{S_d}{\sqrt{n}}`,
      unit: 'same as the run values',
      source: 'PS-2, Eq. 2-3',
      dependsOn: ['tValue', 'stdDevDifference'],
    },
    (t * sd) / Math.sqrt(n),
  );

  let rmSum = 0;
  for (const v of rm) rmSum += v;
  const meanRm = w.number(
    {
      key: 'meanReference',
      label: 'Mean of the reference method values',
      equation: String.raw`\overline{RM} = \frac{1}{n}\sum RM_i`,
      unit: 'same as the run values',
      source: 'PS-2, Eq. 2-4',
      inputs: ['referenceValues'],
    },
    rmSum / n,
  );

  const ra = w.number(
    {
      key: 'relativeAccuracy_pct',
      label: 'Relative accuracy, RA',
      equation: String.raw`RA = \frac{|\bar{d}| + |CC|}{\overline{RM}} \times 100`,
      unit: '%',
      source: 'PS-2, Eq. 2-4',
      dependsOn: ['meanDifference', 'confidenceCoefficient', 'meanReference'],
    },
    ((Math.abs(mean) + Math.abs(cc)) / meanRm) * 100,
  );
  if (ra > RELATIVE_ACCURACY_LIMIT_PCT) {
    w.warn(
      `Relative accuracy is ${fmt(ra, 3)} %, above the 20 % of the mean reference value PS-2 allows (§13.2); check whether the alternative limit based on the emission standard applies.`,
    );
  }

  const biasDetected = w.flag(
    {
      key: 'biasDetected',
      label: 'Bias detected (the monitor reads low)',
      equation: String.raw`\bar{d} > |CC|`,
      unit: '',
      source: 'Part 75, App. A, §7.6',
      dependsOn: ['meanDifference', 'confidenceCoefficient'],
    },
    mean > Math.abs(cc),
  );

  let cemsSum = 0;
  for (const v of cems) cemsSum += v;
  const meanCems = w.number(
    {
      key: 'meanMonitor',
      label: 'Mean of the monitor values',
      equation: String.raw`\overline{CEMS} = \frac{1}{n}\sum CEMS_i`,
      unit: 'same as the run values',
      source: 'Part 75, App. A, §7.6',
      inputs: ['monitorValues'],
    },
    cemsSum / n,
  );

  let baf = 1;
  if (biasDetected) {
    if (meanCems === 0) {
      throw inputError('monitorValues', 'must not all be zero when bias is detected: the bias adjustment factor divides by their mean');
    }
    baf = w.number(
      {
        key: 'biasAdjustmentFactor',
        label: 'Bias adjustment factor, BAF',
        equation: String.raw`BAF = 1 + \frac{|\bar{d}|}{\overline{CEMS}}`,
        unit: '',
        source: 'Part 75, App. A, §7.6.5',
        dependsOn: ['meanDifference', 'meanMonitor'],
      },
      1 + Math.abs(mean) / meanCems,
    );
    w.warn(
      `Bias detected: the mean difference ${fmt(mean)} exceeds the confidence coefficient ${fmt(Math.abs(cc))}, so the monitor reads low. Apply the bias adjustment factor ${fmt(baf)} to its data (Part 75, App. A, §7.6.5).`,
    );
  } else {
    baf = w.number(
      {
        key: 'biasAdjustmentFactor',
        label: 'Bias adjustment factor, BAF (no bias: 1)',
        equation: String.raw`BAF = 1`,
        unit: '',
        source: 'Part 75, App. A, §7.6.5',
        dependsOn: [],
      },
      1,
    );
  }

  return {
    runCount: n,
    differences,
    meanDifference: mean,
    stdDevDifference: sd,
    tValue: t,
    confidenceCoefficient: cc,
    meanReference: meanRm,
    relativeAccuracy_pct: ra,
    biasDetected,
    meanMonitor: meanCems,
    biasAdjustmentFactor: baf,
  };
}
