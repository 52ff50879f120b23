/**
 * Checks for every drill template over 1,000 seeds: the sheet is reproducible, finite, realistic and accepted
 * by the engine; it shows every value the solution needs; and the engine's own answers, typed
 * with four significant figures, score 100.
 */
import { describe, expect, it } from 'vitest';
import { calculate } from '../../../server/engine';
import { drillTemplates, type CompetencyArea, type DrillScenario, type DrillTemplate } from '../../../server/engine/drills';
import { gradeSubmission } from '../../../server/engine/grading/grade';
import { allSheetNumbers, numericLeaves, relativeDifference, sheetNumbers, typedAnswers } from './helpers';

const SEED_COUNT = 1000;
/** Spread over the whole 32-bit range, 0 included (Knuth's multiplicative step). */
const seeds = Array.from({ length: SEED_COUNT }, (_, i) => Math.imul(i, 2654435761) >>> 0);

type Check = (scenario: DrillScenario, expected: Record<string, number>, problem: (message: string) => void) => void;

const within = (values: number[], min: number, max: number) => values.every((v) => v >= min && v <= max);
const mean = (values: number[]) => values.reduce((a, b) => a + b, 0) / values.length;

/** Saturation moisture from the engine's Method 4 saturation check (Method 4, §12). */
function saturation(stackTemp_F: number, absolutePressure_inHg: number): number {
  const r = calculate('moisture', {
    condensateGain_ml: 0,
    meterVolume_ft3: 1,
    meterFactorY: 1,
    barometric_inHg: 29.92,
    orificePressure_inH2O: 0,
    meterTemp_F: 68,
    stackTemp_F,
    absoluteStackPressure_inHg: absolutePressure_inHg,
  });
  return r.results.saturationMoistureFraction as number;
}

/** Ranges every sheet must respect, read by key wherever the value appears. */
const generalChecks: Check = (s, expected, problem) => {
  // ENGINE.md, "Drills and grading": stack temperatures 150–900 °F
  if (!within(sheetNumbers(s, 'stackTemp_F'), 150, 900)) problem('stack temperature outside 150–900 °F');
  // ENGINE.md: Δp 0.05–2.5 in. H2O
  if (!within(sheetNumbers(s, 'deltaP_inH2O'), 0.05, 2.5)) problem('Δp outside 0.05–2.5 in. H2O');
  // ENGINE.md: O2 2–16 %
  for (const key of ['o2_pct', 'o2Dry_pct', 'measuredO2_pct']) {
    if (!within(sheetNumbers(s, key), 2, 16)) problem(`${key} outside 2–16 %`);
  }
  // ENGINE.md: moisture 2–35 %
  const moisture = [...sheetNumbers(s, 'moistureFraction'), ...(expected.moistureFraction !== undefined ? [expected.moistureFraction] : [])];
  if (!within(moisture, 0.02, 0.35)) problem(`moisture ${moisture} outside 2–35 %`);
  // ENGINE.md: diameters 12–240 in.
  if (!within(sheetNumbers(s, 'stackDiameter_in'), 12, 240)) problem('diameter outside 12–240 in.');
  // ENGINE.md: isokinetic far outside 80–120 % is never seen
  if (expected.isokinetic_pct !== undefined && !within([expected.isokinetic_pct], 80, 120)) problem(`isokinetic ${expected.isokinetic_pct} %`);
  // common practice, no source: stack gas velocities of 10–100 ft/s
  const velocity = [...sheetNumbers(s, 'velocity_fps'), ...(expected.velocity_fps !== undefined ? [expected.velocity_fps] : [])];
  if (!within(velocity, 10, 100)) problem(`velocity ${velocity} outside 10–100 ft/s`);

  // ENGINE.md: no supersaturated moisture (checked against Method 4's saturation, §12).
  // Ps = Pbar + Pg/13.6 (Method 2, §12) where the sheet gives barometric and static pressure.
  const temps = sheetNumbers(s, 'stackTemp_F');
  const [absolute] = sheetNumbers(s, 'absoluteStackPressure_inHg');
  const [barometric] = sheetNumbers(s, 'barometric_inHg');
  const [gauge] = sheetNumbers(s, 'staticPressure_inH2O');
  const pressure = absolute ?? (barometric !== undefined && gauge !== undefined ? barometric + gauge / 13.6 : undefined);
  if (moisture.length > 0 && temps.length > 0 && pressure !== undefined) {
    const limit = saturation(mean(temps), pressure);
    if (moisture.some((b) => b >= limit)) problem(`moisture ${moisture} at or above saturation ${limit}`);
  }
};

const specificChecks: Record<string, Check> = {
  'traverse-layout': (s, e, problem) => {
    const [points] = sheetNumbers(s, 'pointsPerDiameter');
    const [portLength] = sheetNumbers(s, 'portLength_in');
    const [diameter] = sheetNumbers(s, 'stackDiameter_in');
    // Method 1, Table 1-2: an even number of points per diameter
    if (!(points % 2 === 0 && points >= 4 && points <= 24)) problem(`points per diameter ${points}`);
    // Method 1: points lie across the stack, in order from the port-side wall
    const marks = [e.point1_distanceFromPortEnd_in, e.point2_distanceFromPortEnd_in, e.point3_distanceFromPortEnd_in, e.lastPoint_distanceFromPortEnd_in];
    if (!marks.every((m, i) => m > portLength && m < portLength + diameter && (i === 0 || m > marks[i - 1]))) problem(`marks ${marks}`);
  },
  'moisture-train': (s, _e, problem) => trainChecks(s, problem),
  'whole-run-reduction': (s, e, problem) => {
    trainChecks(s, problem);
    // common practice, no source: 60–144 min of sampling, 20–150 ft³ metered
    const [minutes] = sheetNumbers(s, 'minutesPerPoint');
    const total = minutes * sheetNumbers(s, 'deltaP_inH2O').length;
    if (!(total >= 60 && total <= 144)) problem(`sampling time ${total} min`);
    const [initial] = sheetNumbers(s, 'meterInitial_ft3');
    const [final] = sheetNumbers(s, 'meterFinal_ft3');
    if (!(final - initial >= 20 && final - initial <= 150)) problem(`metered ${final - initial} ft³`);
    // common practice, no source: a filter catch is positive and concentrations are 0.0005–0.1 gr/dscf
    if (!(e.concentration_grPerDscf > 0.0005 && e.concentration_grPerDscf < 0.1)) problem(`concentration ${e.concentration_grPerDscf}`);
  },
  'isokinetic-check': (_s, e, problem) => {
    // ENGINE.md: isokinetic within 80–120 %
    if (!(e.isokinetic_pct >= 80 && e.isokinetic_pct <= 120)) problem(`isokinetic ${e.isokinetic_pct}`);
  },
  'calibration-error': (s, _e, problem) => qaChecks(s, problem),
  'bias-and-drift': (s, _e, problem) => qaChecks(s, problem),
  'bias-corrected-average': (s, e, problem) => {
    qaChecks(s, problem);
    // Method 7E, Eq. 7E-5b: the upscale responses sit above the zero responses
    if (!(e.upscaleResponseAverage > e.zeroResponseAverage)) problem('upscale average not above zero average');
  },
  'diluent-correction': (s, _e, problem) => {
    // common practice, no source: a correction that changes nothing teaches nothing
    const [measured] = sheetNumbers(s, 'measuredO2_pct');
    const [reference] = sheetNumbers(s, 'referenceO2_pct');
    if (Math.abs(measured - reference) < 0.5) problem('measured O2 at the reference');
  },
  'rata-relative-accuracy': (s, _e, problem) => rataChecks(s, problem),
  'rata-bias-adjustment': (s, e, problem) => {
    rataChecks(s, problem);
    // Part 75, App. A, §7.6.5: BAF is 1 without bias and above 1 with it
    if (!(e.biasAdjustmentFactor >= 1 && e.biasAdjustmentFactor < 1.2)) problem(`BAF ${e.biasAdjustmentFactor}`);
  },
  'rata-paired-differences': (s, _e, problem) => rataChecks(s, problem),
  'ppb-to-number-density': (s, e, problem) => {
    airChecks(s, problem);
    // ENGINE.md trade fact (common knowledge): about 2.4–2.5e19 molecules/cm³ at sea level; lower aloft
    if (!(e.airNumberDensity_perCm3 > 1.3e19 && e.airNumberDensity_perCm3 < 3.1e19)) problem(`air ${e.airNumberDensity_perCm3}`);
  },
  'oxidation-lifetime': (s, e, problem) => {
    airChecks(s, problem);
    // common practice, no source: lifetimes worth asking about, a minute to fifty years
    if (!(e.lifetime_s >= 60 && e.lifetime_s <= 50 * 365.25 * 86400)) problem(`lifetime ${e.lifetime_s} s`);
  },
  'ppm-to-mg-per-m3': (s, e, problem) => {
    // ENGINE.md: molar volume 22.414 L at 0 °C to 24.465 L at 25 °C at 101.325 kPa; site conditions 5–40 °C, 80–103 kPa
    if (!(e.molarVolume_L > 22 && e.molarVolume_L < 33)) problem(`molar volume ${e.molarVolume_L}`);
    if (!within(sheetNumbers(s, 'pressure_kPa'), 80, 103)) problem('pressure outside 80–103 kPa');
  },
};

function trainChecks(s: DrillScenario, problem: (message: string) => void) {
  // common practice, no source: every impinger and the silica gel gain weight; the meter only counts up
  const initial = sheetNumbers(s, 'initial_ml');
  const final = sheetNumbers(s, 'final_ml');
  if (!initial.every((v, i) => final[i] >= v)) problem('an impinger lost liquid');
  if (!(sheetNumbers(s, 'silicaGelFinal_g')[0] > sheetNumbers(s, 'silicaGelInitial_g')[0])) problem('silica gel lost weight');
  if (!(sheetNumbers(s, 'meterFinal_ft3')[0] > sheetNumbers(s, 'meterInitial_ft3')[0])) problem('meter ran backwards');
  // common practice, no source: a calibrated meter box has Y within 0.95–1.05
  if (!within(sheetNumbers(s, 'meterFactorY'), 0.95, 1.05)) problem('meter Y outside 0.95–1.05');
}

function qaChecks(s: DrillScenario, problem: (message: string) => void) {
  // Method 7E, §7.1 (as the engine cites it): low gas under 20 % of span, mid 40–60 %, high equal to the span
  const [span] = sheetNumbers(s, 'span');
  const certified = sheetNumbers(s, 'certified');
  if (!(certified[0] < 0.2 * span && certified[1] >= 0.4 * span && certified[1] <= 0.6 * span && certified[2] === span)) {
    problem(`gas levels ${certified} for span ${span}`);
  }
}

function rataChecks(s: DrillScenario, problem: (message: string) => void) {
  // PS-2: 9 to 12 paired runs
  const runs = sheetNumbers(s, 'reference').length;
  if (!(runs >= 9 && runs <= 12 && sheetNumbers(s, 'monitor').length === runs)) problem(`${runs} runs`);
}

function airChecks(s: DrillScenario, problem: (message: string) => void) {
  // common practice, no source: surface air from 250 to 310 K, stations from high plateaus to sea level
  if (!within(sheetNumbers(s, 'temperature_K'), 250, 310)) problem('temperature outside 250–310 K');
  if (!within(sheetNumbers(s, 'pressure_hPa'), 600, 1030)) problem('pressure outside 600–1030 hPa');
}

/** Numbers the sheet must show: every number in `data` (a sheet value, or a whole-number count such as a run number). */
function dataOnSheet(s: DrillScenario, problem: (message: string) => void) {
  const shown = new Set(allSheetNumbers(s));
  for (const leaf of numericLeaves(s.data)) {
    if (!shown.has(leaf.value)) problem(`data ${leaf.path} = ${leaf.value} is not on the sheet`);
  }
}

/** Declares the 1,000-seed checks for the templates of the given areas. */
export function describeTemplates(areas: readonly CompetencyArea[]): void {
  const templates = drillTemplates.filter((t) => areas.includes(t.area));
  describe.each(templates.map((t) => [t.id, t] as const))('%s over 1,000 seeds', (id, template: DrillTemplate) => {
    it('is reproducible, finite, realistic, shows all its data, and grades its own answers 100', () => {
      const problems: string[] = [];
      const distinct = new Set<string>();
      for (const seed of seeds) {
        const problem = (message: string) => problems.push(`seed ${seed}: ${message}`);
        const scenario = template.generate(seed);
        const again = template.generate(seed);
        const json = JSON.stringify(scenario);
        if (JSON.stringify(again) !== json) problem('not reproducible');
        distinct.add(JSON.stringify(scenario.data));
        if (scenario.templateId !== id || scenario.seed !== seed) problem('wrong template id or seed');
        if (!numericLeaves(scenario).every((leaf) => Number.isFinite(leaf.value))) problem('a number is not finite');
        if (JSON.stringify(JSON.parse(json)) !== json) problem('does not survive JSON');
        dataOnSheet(scenario, problem);

        const solution = template.solve(scenario);
        const keys = template.fields.map((f) => f.key);
        if (JSON.stringify(Object.keys(solution.expected)) !== JSON.stringify(keys)) problem(`solved ${Object.keys(solution.expected)}`);
        if (!Object.values(solution.expected).every(Number.isFinite)) problem('an expected value is not finite');
        if (solution.steps.length === 0) problem('no worked steps');

        generalChecks(scenario, solution.expected, problem);
        specificChecks[id]?.(scenario, solution.expected, problem);

        // recomputing from the exact earlier values gives the exact value back
        for (const field of template.fields) {
          if (!field.dependsOn?.length) continue;
          const again = template.recompute(field.key, solution.expected, scenario);
          if (again === undefined || relativeDifference(again, solution.expected[field.key]) > 1e-9) {
            problem(`${field.key} recomputes to ${again}, not ${solution.expected[field.key]}`);
          }
        }

        const graded = gradeSubmission(template, scenario, typedAnswers(solution.expected));
        if (graded.score !== 100) problem(`own answers score ${graded.score}: ${graded.fields.filter((f) => f.verdict !== 'correct').map((f) => f.message)}`);
      }
      expect(problems.slice(0, 20)).toEqual([]);
      // a generator that ignores its seed would repeat itself (common practice, no source)
      expect(distinct.size).toBeGreaterThan(0.95 * SEED_COUNT);
    }, 120_000);
  });
}
