/**
 * The flagship drill, checked by hand: a whole Method 5 run reduced from the trainee's sheet alone
 * with the method equations as ENGINE.md prints them, independently of the engine; then a trainee
 * who makes the classic moisture slip (Vw/Vm instead of Vw/(Vw + Vm)) and works on correctly.
 */
import { describe, expect, it } from 'vitest';
import { getDrillTemplate, type DrillScenario } from '../../../server/engine/drills';
import { gradeSubmission } from '../../../server/engine/grading/grade';
import { relativeDifference, sheetNumbers } from './helpers';

const template = getDrillTemplate('whole-run-reduction')!;

const one = (s: DrillScenario, key: string) => {
  const [value] = sheetNumbers(s, key);
  if (value === undefined) throw new Error(`The sheet shows no ${key}.`);
  return value;
};
const avg = (values: number[]) => values.reduce((a, b) => a + b, 0) / values.length;

/** Reduces the sheet by hand. `moistureRule` lets a simulated trainee get Eq. 4-4 wrong. */
function reduceByHand(s: DrillScenario, moistureRule = (vw: number, vm: number) => vw / (vw + vm)) {
  const dp = sheetNumbers(s, 'deltaP_inH2O');
  const ts_F = sheetNumbers(s, 'stackTemp_F');
  const dH = avg(sheetNumbers(s, 'orificePressure_inH2O'));
  const tm = avg([...sheetNumbers(s, 'meterInlet_F'), ...sheetNumbers(s, 'meterOutlet_F')]);
  const pbar = one(s, 'barometric_inHg');
  const vm = one(s, 'meterFinal_ft3') - one(s, 'meterInitial_ft3');
  // Method 4, Eq. 4-3 (Method 5, Eq. 5-1): Vm(std) = 17.64 Y Vm (Pbar + ΔH/13.6)/(tm + 460)
  const vmStd = (17.64 * one(s, 'meterFactorY') * vm * (pbar + dH / 13.6)) / (tm + 460);
  // Method 4, Eqs. 4-1 and 4-2: 0.04706 ft³/ml of condensate, 0.04715 ft³/g of silica gel gain
  const initial = sheetNumbers(s, 'initial_ml');
  const condensate = sheetNumbers(s, 'final_ml').reduce((sum, v, i) => sum + v - initial[i], 0);
  const gel = one(s, 'silicaGelFinal_g') - one(s, 'silicaGelInitial_g');
  const vw = 0.04706 * condensate + 0.04715 * gel;
  const bws = moistureRule(vw, vmStd);
  // Method 3: Md = 0.44 %CO2 + 0.32 %O2 + 0.28 %N2, N2 by difference
  const co2 = one(s, 'co2_pct');
  const o2 = one(s, 'o2_pct');
  const md = 0.44 * co2 + 0.32 * o2 + 0.28 * (100 - co2 - o2);
  // Method 2, Eq. 2-5
  const ms = md * (1 - bws) + 18.0 * bws;
  // Method 2, §12 and Eq. 2-9: mean of the square roots
  const ps = pbar + one(s, 'staticPressure_inH2O') / 13.6;
  const ts = avg(ts_F) + 460;
  const vs = 85.49 * one(s, 'pitotCoefficient') * avg(dp.map(Math.sqrt)) * Math.sqrt(ts / (ps * ms));
  // Method 2, Eq. 2-10, with A = π D²/4 in ft²
  const area = (Math.PI / 4) * (one(s, 'stackDiameter_in') / 12) ** 2;
  const qsd = 3600 * (1 - bws) * vs * area * ((528 * ps) / (ts * 29.92));
  // Method 5, Eq. 5-9 (K = 0.09450), θ = points × minutes per point
  const an = (Math.PI / 4) * (one(s, 'nozzleDiameter_in') / 12) ** 2;
  const theta = dp.length * one(s, 'minutesPerPoint');
  const iso = (0.0945 * ts * vmStd) / (ps * vs * an * theta * (1 - bws));
  // Method 5, Eq. 5-6 (0.0154 gr/mg) and 7000 gr/lb
  const mn = one(s, 'filterGain_mg') + one(s, 'rinseResidue_mg');
  const cs = (0.0154 * mn) / vmStd;
  return {
    meterVolumeStd_dscf: vmStd,
    waterVaporStd_scf: vw,
    moistureFraction: bws,
    dryMolecularWeight: md,
    wetMolecularWeight: ms,
    velocity_fps: vs,
    dryStdFlow_dscfh: qsd,
    isokinetic_pct: iso,
    concentration_grPerDscf: cs,
    emissionRate_lbPerHr: (cs * qsd) / 7000,
  } as Record<string, number>;
}

describe('whole-run-reduction', () => {
  it('can be reduced from the sheet alone, to the engine’s answers', () => {
    for (let seed = 500; seed < 600; seed++) {
      const scenario = template.generate(seed);
      const exact = template.solve(scenario).expected;
      const byHand = reduceByHand(scenario);
      for (const field of template.fields) {
        // the engine works in full double precision; 1e-9 allows only summation order
        expect(relativeDifference(byHand[field.key], exact[field.key]), `seed ${seed}, ${field.key}`).toBeLessThan(1e-9);
      }
    }
  });

  it('gives method credit down the chain after a moisture slip, checked against hand arithmetic', () => {
    const wrongRule = (vw: number, vm: number) => vw / vm; // forgets to add Vw to the denominator
    const builtOnMoisture = ['wetMolecularWeight', 'velocity_fps', 'dryStdFlow_dscfh', 'isokinetic_pct', 'emissionRate_lbPerHr'];
    const untouched = ['meterVolumeStd_dscf', 'waterVaporStd_scf', 'dryMolecularWeight', 'concentration_grPerDscf'];
    const carried = new Map(builtOnMoisture.map((key) => [key, 0]));
    for (let seed = 600; seed < 700; seed++) {
      const scenario = template.generate(seed);
      const own = reduceByHand(scenario, wrongRule);
      const exact = template.solve(scenario).expected;
      const answers = Object.fromEntries(Object.entries(own).map(([k, v]) => [k, v.toPrecision(5)]));
      const result = gradeSubmission(template, scenario, answers);
      const graded = Object.fromEntries(result.fields.map((f) => [f.key, f]));
      // the slip itself is wrong (Vw/Vm is B/(1 − B): at least 2 % off in a 2–35 % moisture range)
      expect(graded.moistureFraction.verdict, `seed ${seed}`).toBe('incorrect');
      for (const key of untouched) expect(graded[key].verdict, `seed ${seed}, ${key}`).toBe('correct');
      for (const key of builtOnMoisture) {
        const message = `seed ${seed}, ${key}`;
        const off = relativeDifference(own[key], exact[key]);
        // where the slip moves the step beyond the 1 % tolerance: method credit; where it does not: right
        if (off > 0.012) expect(graded[key].verdict, message).toBe('carried-forward');
        else if (off < 0.008) expect(graded[key].verdict, message).toBe('correct');
        else expect(graded[key].verdict, message).not.toBe('incorrect');
        if (graded[key].verdict === 'carried-forward') {
          carried.set(key, (carried.get(key) ?? 0) + 1);
          // the grader's recomputation is the method's arithmetic on the trainee's own numbers
          expect(relativeDifference(graded[key].recomputedExpected!, own[key]), message).toBeLessThan(1e-4);
        }
      }
    }
    for (const [key, count] of carried) expect(count, key).toBeGreaterThan(5);
  });

  it('marks a velocity from the root of the mean Δp incorrect when the earlier steps were right', () => {
    let checked = 0;
    for (let seed = 700; seed < 900 && checked < 5; seed++) {
      const scenario = template.generate(seed);
      const exact = template.solve(scenario).expected;
      const dp = sheetNumbers(scenario, 'deltaP_inH2O');
      // the shortcut Eq. 2-9 rules out: √(mean Δp) in place of the mean of √Δp
      const shortcut = exact.velocity_fps * (Math.sqrt(avg(dp)) / avg(dp.map(Math.sqrt)));
      if (relativeDifference(shortcut, exact.velocity_fps) < 0.012) continue;
      checked++;
      const answers: Record<string, string> = {};
      for (const key of ['meterVolumeStd_dscf', 'waterVaporStd_scf', 'moistureFraction', 'dryMolecularWeight', 'wetMolecularWeight']) {
        answers[key] = exact[key].toPrecision(5);
      }
      answers.velocity_fps = shortcut.toPrecision(5);
      const result = gradeSubmission(template, scenario, answers);
      expect(result.fields.find((f) => f.key === 'velocity_fps')?.verdict, `seed ${seed}`).toBe('incorrect');
    }
    // some traverses are uneven enough for the shortcut to show beyond the tolerance
    expect(checked).toBe(5);
  });
});
