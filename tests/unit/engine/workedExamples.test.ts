/**
 * Hand-worked examples. Every expected value is worked in the test from the published equation
 * with the method's own constants (never read from the engine), and where practical also pinned
 * to a number worked by hand on paper. Tolerance 0.1 % relative unless stated.
 */
import { describe, expect, it } from 'vitest';
import { calculate, type CalculationResult } from '../../../server/engine';

const close = (actual: unknown, expected: number, rel = 1e-3) => {
  expect(typeof actual).toBe('number');
  expect(Math.abs((actual as number) - expected)).toBeLessThanOrEqual(Math.abs(expected) * rel + 1e-15);
};
const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
const step = (r: CalculationResult, key: string) => {
  const found = r.steps.find((s) => s.key === key);
  if (!found) throw new Error(`no step ${key}`);
  return found;
};

describe('stack-flow, worked by hand from Method 2, Eqs. 2-5, 2-9 and 2-10', () => {
  const dp = [0.42, 0.51, 0.58, 0.62];
  const temps = [280, 285, 290, 285];
  const inputs = {
    deltaP_inH2O: dp,
    stackTemp_F: temps,
    barometric_inHg: 29.62,
    staticPressure_inH2O: -0.62,
    pitotCoefficient: 0.84,
    dryMolecularWeight: 30.2,
    moistureFraction: 0.11,
    stackDiameter_in: 48,
  };
  const r = calculate('stack-flow', inputs);
  const ps = 29.62 + -0.62 / 13.6; // Method 2: Ps = Pbar + Pg/13.6
  const ms = 30.2 * (1 - 0.11) + 18.0 * 0.11; // Eq. 2-5
  const meanSqrt = mean(dp.map(Math.sqrt)); // Eq. 2-9: mean of the square roots
  const ts = mean(temps) + 460;
  const vs = 85.49 * 0.84 * meanSqrt * Math.sqrt(ts / (ps * ms)); // Eq. 2-9
  const area = (Math.PI / 4) * (48 / 12) ** 2;
  const qsd = 3600 * (1 - 0.11) * vs * area * ((528 * ps) / (ts * 29.92)); // Eq. 2-10

  it('absolute pressure, wet molecular weight, absolute temperature (hand: 29.574 in. Hg, 28.858, 745 °R)', () => {
    close(r.results.absoluteStackPressure_inHg, ps);
    close(r.results.absoluteStackPressure_inHg, 29.574);
    close(r.results.wetMolecularWeight, ms);
    close(r.results.wetMolecularWeight, 28.858);
    close(r.results.absoluteStackTemp_R, 745);
  });
  it('velocity (hand: 48.83 ft/s) and area (hand: 12.566 ft²)', () => {
    close(r.results.velocity_fps, vs);
    close(r.results.velocity_fps, 48.83);
    close(r.results.stackArea_ft2, area);
    close(r.results.stackArea_ft2, 12.566);
  });
  it('flows (hand: 36,817 acfm; 1,377,300 dscf/hr; 22,955 dscfm)', () => {
    close(r.results.actualFlow_acfm, 60 * vs * area);
    close(r.results.actualFlow_acfm, 36817);
    close(r.results.dryStdFlow_dscfh, qsd);
    close(r.results.dryStdFlow_dscfh, 1.3773e6);
    close(r.results.dryStdFlow_dscfm, qsd / 60);
    close(r.results.dryStdFlow_dscfm, 22955);
  });
  it('averages the square roots of Δp, not the root of the averaged Δp (Method 2, Eq. 2-9), and the two differ', () => {
    const spread = [0.1, 1.6];
    const rs = calculate('stack-flow', { ...inputs, deltaP_inH2O: spread, stackTemp_F: 285 });
    const meanOfRoots = (Math.sqrt(0.1) + Math.sqrt(1.6)) / 2; // 0.7906
    const rootOfMean = Math.sqrt((0.1 + 1.6) / 2); // 0.9220
    close(rs.results.meanSqrtDeltaP, meanOfRoots, 1e-9);
    expect(Math.abs((rs.results.meanSqrtDeltaP as number) - rootOfMean)).toBeGreaterThan(0.1);
    const vsWrong = 85.49 * 0.84 * rootOfMean * Math.sqrt(745 / (ps * ms));
    expect((rs.results.velocity_fps as number) / vsWrong).toBeLessThan(0.9);
  });
  it('a single stack temperature and a given area give the same flow as the per-point temperatures with the same mean', () => {
    const single = calculate('stack-flow', { ...inputs, stackTemp_F: 285, stackDiameter_in: undefined, stackArea_ft2: area });
    close(single.results.dryStdFlow_dscfh, qsd, 1e-9);
  });
  it('steps carry the equation sources and dependencies a grader needs', () => {
    expect(step(r, 'velocity_fps').source).toBe('Method 2, Eq. 2-9');
    expect(step(r, 'dryStdFlow_dscfh').source).toBe('Method 2, Eq. 2-10');
    expect(step(r, 'wetMolecularWeight').source).toBe('Method 2, Eq. 2-5');
    expect(step(r, 'velocity_fps').dependsOn).toEqual(
      expect.arrayContaining(['meanSqrtDeltaP', 'absoluteStackTemp_R', 'absoluteStackPressure_inHg', 'wetMolecularWeight']),
    );
  });
  it('an override of Ms (a trainee’s own value) recomputes velocity from it by Eq. 2-9', () => {
    const o = calculate('stack-flow', inputs, { overrides: { wetMolecularWeight: 29.5 } });
    close(o.results.wetMolecularWeight, 29.5, 0);
    close(o.results.velocity_fps, 85.49 * 0.84 * meanSqrt * Math.sqrt(ts / (ps * 29.5)));
    const same = calculate('stack-flow', inputs, { overrides: { wetMolecularWeight: r.results.wetMolecularWeight as number } });
    expect(same.results).toEqual(r.results);
  });
});

describe('moisture, worked by hand from Method 4, Eqs. 4-1 to 4-4', () => {
  const inputs = {
    condensateGain_ml: 112.5,
    silicaGelGain_g: 9.8,
    meterVolume_ft3: 36.42,
    meterFactorY: 0.998,
    barometric_inHg: 29.62,
    orificePressure_inH2O: 1.45,
    meterTemp_F: 84,
  };
  const vwc = 0.04706 * 112.5; // Eq. 4-1
  const vwsg = 0.04715 * 9.8; // Eq. 4-2
  const vmStd = (17.64 * 0.998 * 36.42 * (29.62 + 1.45 / 13.6)) / (84 + 460); // Eq. 4-3
  const bws = (vwc + vwsg) / (vwc + vwsg + vmStd); // Eq. 4-4

  it('water vapor, metered volume and Bws (hand: 5.2943 + 0.4621 scf, 35.036 dscf, Bws 0.1411)', () => {
    const r = calculate('moisture', inputs);
    close(r.results.condensateVaporStd_scf, vwc);
    close(r.results.silicaGelVaporStd_scf, vwsg);
    close(r.results.waterVaporStd_scf, vwc + vwsg);
    close(r.results.waterVaporStd_scf, 5.2943 + 0.4621);
    close(r.results.meterVolumeStd_dscf, vmStd);
    close(r.results.meterVolumeStd_dscf, 35.036);
    close(r.results.moistureFraction, bws);
    close(r.results.moistureFraction, 0.1411);
    expect(r.warnings).toEqual([]);
    expect(r.results.saturationMoistureFraction).toBeUndefined();
  });
  it('below saturation at 285 °F: no warning; saturation capped at 1 above the boiling point', () => {
    const r = calculate('moisture', { ...inputs, stackTemp_F: 285, absoluteStackPressure_inHg: 29.5 });
    expect(r.results.saturationMoistureFraction).toBe(1);
    close(r.results.moistureFractionToUse, bws);
    expect(r.warnings).toEqual([]);
  });
  it('supersaturated at 120 °F: warns with the saturation value and uses the lower (Method 4; Antoine constants, handbook)', () => {
    const r = calculate('moisture', { ...inputs, stackTemp_F: 120, absoluteStackPressure_inHg: 29.5 });
    const tC = (120 - 32) / 1.8;
    const pv_inHg = 10 ** (8.07131 - 1730.63 / (233.426 + tC)) / 25.4; // Antoine, 1–100 °C set
    close(r.results.waterVaporPressure_inHg, pv_inHg);
    // Steam tables: 1.695 psia = 3.451 in. Hg at 120 °F (from memory), within 1 %.
    close(r.results.waterVaporPressure_inHg, 3.451, 1e-2);
    close(r.results.saturationMoistureFraction, pv_inHg / 29.5);
    close(r.results.moistureFractionToUse, pv_inHg / 29.5);
    expect(r.warnings).toHaveLength(1);
    expect(r.warnings[0]).toMatch(/saturation/);
    expect(r.warnings[0]).toContain(String(Number((pv_inHg / 29.5).toPrecision(4))));
    expect(r.warnings[0]).toMatch(/lower/);
  });
});

describe('gas-composition, worked by hand from Method 3 and Method 2, Eq. 2-5', () => {
  it('12 % CO2, 6 % O2, 0.2 % CO, Bws 0.1 (hand: N2 81.8 %, Md 30.16, Ms 28.944)', () => {
    const r = calculate('gas-composition', { co2_pct: 12, o2_pct: 6, co_pct: 0.2, moistureFraction: 0.1 });
    const n2 = 100 - 12 - 6 - 0.2;
    const md = 0.44 * 12 + 0.32 * 6 + 0.28 * (n2 + 0.2);
    close(r.results.n2_pct, n2);
    close(r.results.dryMolecularWeight, md);
    close(r.results.dryMolecularWeight, 30.16);
    close(r.results.wetMolecularWeight, md * 0.9 + 18.0 * 0.1);
    close(r.results.wetMolecularWeight, 28.944);
  });
  it('air, 20.9 % O2: Md = 28.84 (Method 3, common check value for ambient air)', () => {
    const r = calculate('gas-composition', { co2_pct: 0, o2_pct: 20.9 });
    close(r.results.dryMolecularWeight, 28.836);
    expect(r.results.wetMolecularWeight).toBeUndefined();
  });
});

describe('isokinetic, worked by hand from Method 5, Eq. 5-9', () => {
  const inputs = {
    stackTemp_F: 285,
    meterVolumeStd_dscf: 38.2,
    absoluteStackPressure_inHg: 29.57,
    velocity_fps: 41.3,
    nozzleDiameter_in: 0.25,
    sampleTime_min: 72,
    moistureFraction: 0.11,
  };
  const an = (Math.PI / 4) * (0.25 / 12) ** 2;
  const iso = (0.0945 * (285 + 460) * 38.2) / (29.57 * 41.3 * an * 72 * (1 - 0.11));

  it('within limits (hand: An 3.409e-4 ft², I 100.8 %)', () => {
    const r = calculate('isokinetic', inputs);
    close(r.results.nozzleArea_ft2, an);
    close(r.results.nozzleArea_ft2, 3.409e-4);
    close(r.results.isokinetic_pct, iso);
    close(r.results.isokinetic_pct, 100.8);
    expect(r.results.withinLimits).toBe(true);
    expect(r.warnings).toEqual([]);
  });
  it('outside 90–110 %: flagged and warned (Method 5, §12.12)', () => {
    const r = calculate('isokinetic', { ...inputs, meterVolumeStd_dscf: 38.2 * 1.15 });
    close(r.results.isokinetic_pct, iso * 1.15);
    expect(r.results.withinLimits).toBe(false);
    expect(r.warnings.join(' ')).toMatch(/90–110 %/);
  });
  it('the limits are inclusive of 90–110 %: 109.99 % passes, 110.01 % and 89.99 % do not (Method 5, §12.12)', () => {
    const at = (pct: number) => calculate('isokinetic', { ...inputs, meterVolumeStd_dscf: (38.2 * pct) / iso }).results.withinLimits;
    expect(at(109.99)).toBe(true);
    expect(at(90.01)).toBe(true);
    expect(at(110.01)).toBe(false);
    expect(at(89.99)).toBe(false);
  });
});

describe('particulate, worked by hand from Method 5, Eq. 5-6', () => {
  it('18.7 mg in 38.2 dscf at 1.9e6 dscf/hr (hand: 0.007539 gr/dscf, 17.29 mg/dscm, 2.046 lb/hr)', () => {
    const r = calculate('particulate', { filterCatch_mg: 18.7, meterVolumeStd_dscf: 38.2, dryStdFlow_dscfh: 1.9e6 });
    const gr = (0.0154 * 18.7) / 38.2;
    close(r.results.concentration_grPerDscf, gr);
    close(r.results.concentration_grPerDscf, 0.007539);
    close(r.results.concentration_mgPerDscm, 18.7 / (38.2 * 0.028317));
    close(r.results.concentration_mgPerDscm, 17.29);
    close(r.results.emissionRate_lbPerHr, (gr * 1.9e6) / 7000);
    close(r.results.emissionRate_lbPerHr, 2.046);
  });
  it('no flow rate, no emission rate', () => {
    const r = calculate('particulate', { filterCatch_mg: 18.7, meterVolumeStd_dscf: 38.2 });
    expect(r.results.emissionRate_lbPerHr).toBeUndefined();
  });
});

describe('mass-emission-rate, worked by hand (Part 75 App. F; Method 19 Table 19-1; 385.3 scf/lb-mol)', () => {
  it('142 ppm SO2 at 4.2e7 dscf/hr (hand: 990.0 lb/hr, 449.1 kg/hr, 4336 tons/yr)', () => {
    const r = calculate('mass-emission-rate', { concentration_ppmvd: 142, pollutant: 'SO2', dryStdFlow_dscfh: 4.2e7 });
    const lbHr = 1.66e-7 * 142 * 4.2e7;
    close(r.results.concentration_lbPerDscf, 1.66e-7 * 142);
    close(r.results.emissionRate_lbPerHr, lbHr);
    close(r.results.emissionRate_lbPerHr, 990.0);
    close(r.results.emissionRate_kgPerHr, lbHr * 0.45359237);
    close(r.results.emissionRate_kgPerHr, 449.1);
    close(r.results.emissionRate_tonsPerYear, (lbHr * 8760) / 2000);
    close(r.results.emissionRate_tonsPerYear, 4336);
  });
  it('CO uses MW/385.3e6 with MW 28.010 (IUPAC atomic weights)', () => {
    const r = calculate('mass-emission-rate', { concentration_ppmvd: 50, pollutant: 'CO', dryStdFlow_dscfh: 1e6 });
    close(r.results.conversionFactor_lbPerScfPpm, 28.01 / 385.3e6);
    close(r.results.emissionRate_lbPerHr, (28.01 / 385.3e6) * 50 * 1e6);
  });
  it('a custom pollutant uses its molecular weight (NH3, 17.031)', () => {
    const r = calculate('mass-emission-rate', { concentration_ppmvd: 10, pollutant: 'custom', molecularWeight: 17.031, dryStdFlow_dscfh: 2e6 });
    close(r.results.emissionRate_lbPerHr, (17.031 / 385.3e6) * 10 * 2e6);
  });
});

describe('f-factor-rate, worked by hand from Method 19, Eq. 19-1 (and the Fc form)', () => {
  it('38 ppm NOx at 3.4 % O2 on natural gas (hand: 0.04720 lb/MMBtu)', () => {
    const r = calculate('f-factor-rate', { concentration_ppmvd: 38, pollutant: 'NOx', o2Dry_pct: 3.4, fuel: 'naturalGas' });
    const e = 1.194e-7 * 38 * 8710 * (20.9 / (20.9 - 3.4));
    close(r.results.emissionRate_lbPerMMBtu, e);
    close(r.results.emissionRate_lbPerMMBtu, 0.0472);
  });
  it('a given Fd and a lb/dscf concentration', () => {
    const r = calculate('f-factor-rate', { concentration_lbPerDscf: 2.5e-6, o2Dry_pct: 7, fdFactor_dscfPerMMBtu: 9780 });
    close(r.results.emissionRate_lbPerMMBtu, 2.5e-6 * 9780 * (20.9 / 13.9));
  });
  it('CO2 basis: E = Cd Fc 100/%CO2 with natural gas Fc 1,040 (hand: 0.104 lb/MMBtu)', () => {
    const r = calculate('f-factor-rate', { concentration_lbPerDscf: 1e-5, co2Dry_pct: 10, fuel: 'naturalGas' });
    close(r.results.emissionRate_lbPerMMBtu, 1e-5 * 1040 * (100 / 10));
    close(r.results.emissionRate_lbPerMMBtu, 0.104);
  });
});

describe('diluent-correction, worked by hand (common practice: C (20.9 − O2ref)/(20.9 − O2meas))', () => {
  it('41.5 ppm at 8.2 % O2 to 3 % O2 (hand: 58.49 ppm)', () => {
    const r = calculate('diluent-correction', { concentration: 41.5, measuredO2_pct: 8.2, referenceO2_pct: 3 });
    close(r.results.correctedConcentration, (41.5 * (20.9 - 3)) / (20.9 - 8.2));
    close(r.results.correctedConcentration, 58.49);
  });
  it('measured at the reference O2: unchanged', () => {
    const r = calculate('diluent-correction', { concentration: 12, measuredO2_pct: 15, referenceO2_pct: 15 });
    close(r.results.correctedConcentration, 12, 1e-12);
  });
});

describe('concentration-conversion, number-density, chemical-lifetime, worked by hand (ideal gas; CODATA 2018)', () => {
  it('25 ppmv NO2 at 20 °C, 101.325 kPa (hand: 47.81 mg/m³; MW 46.005 from IUPAC weights)', () => {
    const r = calculate('concentration-conversion', { value: 25, from: 'ppmv', pollutant: 'NO2' });
    const vm = (8.314462618 * 293.15) / 101.325;
    close(r.results.molecularWeight, 14.007 + 2 * 15.999);
    close(r.results.mgPerM3, (25 * 46.005) / vm);
    close(r.results.mgPerM3, 47.81);
  });
  it('the reverse: 100 mg/m³ SO2 at 25 °C (hand: 38.19 ppmv)', () => {
    const r = calculate('concentration-conversion', { value: 100, from: 'mg/m3', pollutant: 'SO2', temperature_C: 25 });
    close(r.results.ppmv, (100 * 24.465) / 64.058);
    close(r.results.ppmv, 38.19);
  });
  it('40 ppb at 288.15 K, 1013.25 hPa (hand: 1.0188e12 molecules/cm³); and back', () => {
    const r = calculate('number-density', { mixingRatio: 40, mixingRatioUnit: 'ppb', temperature_K: 288.15, pressure_hPa: 1013.25 });
    const nAir = 101325 / (1.380649e-23 * 288.15) / 1e6;
    close(r.results.numberDensity_perCm3, 40e-9 * nAir);
    close(r.results.numberDensity_perCm3, 1.0188e12);
    const back = calculate('number-density', { numberDensity_perCm3: 40e-9 * nAir, temperature_K: 288.15, pressure_hPa: 1013.25 });
    close(back.results.mixingRatio_ppb, 40);
  });
  it('k = 6.4e-15 cm³/(molecule s), [OH] = 1e6 /cm³ (hand: τ = 1.5625e8 s = 1808 days = 4.951 years)', () => {
    const r = calculate('chemical-lifetime', { rateConstant_cm3PerMoleculeS: 6.4e-15, oxidantNumberDensity_perCm3: 1e6 });
    close(r.results.lifetime_s, 1 / (6.4e-15 * 1e6));
    close(r.results.lifetime_s, 1.5625e8);
    close(r.results.lifetime_days, 1808.4);
    close(r.results.lifetime_years, 1.5625e8 / (365.25 * 86400));
    close(r.results.lifetime_years, 4.951);
  });
  it('oxidant from a mixing ratio: 40 ppb O3 at 298 K, 1013 hPa', () => {
    const r = calculate('chemical-lifetime', {
      rateConstant_cm3PerMoleculeS: 1e-17,
      oxidantMixingRatio: 40,
      oxidantMixingRatioUnit: 'ppb',
      temperature_K: 298,
      pressure_hPa: 1013,
    });
    const x = 40e-9 * (101300 / (1.380649e-23 * 298) / 1e6);
    close(r.results.oxidantNumberDensity_perCm3, x);
    close(r.results.lifetime_s, 1 / (1e-17 * x));
  });
});

describe('analyzer-checks, worked by hand from Method 7E, Eqs. 7E-1, 7E-2, 7E-4, 7E-5b', () => {
  const inputs = {
    span: 100,
    calibrationGases: [
      { certified: 0, directResponse: 0.3 },
      { certified: 50.2, directResponse: 50.6 },
      { certified: 100, directResponse: 99.1 },
    ],
    systemBias: { zero: { certified: 0, pre: 0.6, post: 0.9 }, upscale: { certified: 50.2, pre: 49.8, post: 49.3 } },
    runAverage: 37.4,
  };
  const r = calculate('analyzer-checks', inputs);

  it('calibration error per gas, in order (Eq. 7E-1; hand: 0.3, 0.4, −0.9 % of span)', () => {
    const ce = r.results.calibrationError_pct as number[];
    expect(ce).toHaveLength(3);
    close(ce[0], 0.3);
    close(ce[1], ((50.6 - 50.2) / 100) * 100);
    close(ce[2], -0.9);
    expect(r.results.calibrationErrorPass).toBe(true);
  });
  it('system bias against the direct response to the same gas (Eq. 7E-2) and drift (Eq. 7E-4)', () => {
    close(r.results.zeroBiasPre_pct, ((0.6 - 0.3) / 100) * 100);
    close(r.results.zeroBiasPost_pct, ((0.9 - 0.3) / 100) * 100);
    close(r.results.upscaleBiasPre_pct, ((49.8 - 50.6) / 100) * 100);
    close(r.results.upscaleBiasPost_pct, ((49.3 - 50.6) / 100) * 100);
    close(r.results.zeroDrift_pct, 0.3);
    close(r.results.upscaleDrift_pct, 0.5);
    expect(r.results.allChecksPass).toBe(true);
  });
  it('bias-corrected average (Eq. 7E-5b; hand: C0 0.75, CM 49.55, 37.70 ppmv)', () => {
    const c0 = (0.6 + 0.9) / 2;
    const cm = (49.8 + 49.3) / 2;
    close(r.results.biasCorrectedAverage, ((37.4 - c0) * 50.2) / (cm - c0));
    close(r.results.biasCorrectedAverage, 37.70);
  });
  it('failures: calibration error beyond 2 % and 0.5 ppmv, bias beyond 5 %, drift beyond 3 % (Method 7E, §13)', () => {
    const bad = calculate('analyzer-checks', {
      ...inputs,
      calibrationGases: [inputs.calibrationGases[0], { certified: 50.2, directResponse: 53 }, inputs.calibrationGases[2]],
      systemBias: { zero: { certified: 0, pre: 0.6, post: 0.9 }, upscale: { certified: 50.2, pre: 52.5, post: 47.5 } },
    });
    close((bad.results.calibrationError_pct as number[])[1], 2.8);
    expect(bad.results.calibrationErrorPass).toBe(false);
    close(bad.results.upscaleBiasPost_pct, -5.5);
    expect(bad.results.upscaleBiasPostPass).toBe(false);
    expect(bad.results.upscaleBiasPrePass).toBe(true);
    close(bad.results.upscaleDrift_pct, 5.0);
    expect(bad.results.upscaleDriftPass).toBe(false);
    expect(bad.results.allChecksPass).toBe(false);
    expect(bad.warnings.length).toBeGreaterThanOrEqual(3);
  });
  it('the 0.5 ppmv alternative passes a small absolute error on a low span (Method 7E, §13.1)', () => {
    const low = calculate('analyzer-checks', {
      span: 10,
      calibrationGases: [
        { certified: 0, directResponse: 0.4 },
        { certified: 5, directResponse: 5.3 },
        { certified: 10, directResponse: 10 },
      ],
      systemBias: { zero: { certified: 0, pre: 0.4, post: 0.4 }, upscale: { certified: 5, pre: 5.3, post: 5.3 } },
      runAverage: 3,
    });
    close((low.results.calibrationError_pct as number[])[0], 4); // 4 % of span, but only 0.4 ppmv
    expect(low.results.calibrationErrorPass).toBe(true);
  });
});

describe('relative-accuracy, worked by hand from PS-2, Eqs. 2-1 to 2-4 and Part 75 App. A §7.6', () => {
  const rm = [101.2, 98.7, 103.4, 99.9, 100.8, 97.6, 102.1, 100.3, 99.2];
  const cems = [99.8, 97.9, 101.6, 99.1, 100.2, 97.1, 100.9, 99.4, 98.8];
  const d = rm.map((v, i) => v - cems[i]);
  const n = 9;
  const sum = d.reduce((a, b) => a + b, 0);
  const sumSq = d.reduce((a, b) => a + b * b, 0);
  const dBar = sum / n; // Eq. 2-1
  const sd = Math.sqrt((sumSq - sum ** 2 / n) / (n - 1)); // Eq. 2-2, as published
  const cc = (2.306 * sd) / Math.sqrt(n); // Eq. 2-3, t from Table 2-1
  const ra = ((Math.abs(dBar) + Math.abs(cc)) / mean(rm)) * 100; // Eq. 2-4
  const r = calculate('relative-accuracy', { referenceValues: rm, monitorValues: cems });

  it('differences, mean, Sd, CC and RA (hand: d̄ 0.9333, Sd 0.4555, CC 0.3501, RA 1.279 %)', () => {
    (r.results.differences as number[]).forEach((v, i) => close(v, d[i], 1e-9));
    close(r.results.meanDifference, dBar);
    close(r.results.meanDifference, 0.9333);
    close(r.results.stdDevDifference, sd);
    close(r.results.stdDevDifference, 0.4555);
    close(r.results.confidenceCoefficient, cc);
    close(r.results.confidenceCoefficient, 0.3501);
    close(r.results.relativeAccuracy_pct, ra);
    close(r.results.relativeAccuracy_pct, 1.279);
  });
  it('bias: d̄ > |CC|, the monitor reads low; BAF = 1 + |d̄|/mean CEMS (Part 75 App. A §7.6.5; hand: 1.0094)', () => {
    expect(r.results.biasDetected).toBe(true);
    close(r.results.biasAdjustmentFactor, 1 + Math.abs(dBar) / mean(cems));
    close(r.results.biasAdjustmentFactor, 1.0094);
    expect(r.warnings.join(' ')).toMatch(/[Bb]ias/);
  });
  it('no bias when the differences scatter around zero: BAF 1', () => {
    const scattered = calculate('relative-accuracy', {
      referenceValues: rm,
      monitorValues: rm.map((v, i) => v + (i % 2 === 0 ? 0.8 : -0.9)),
    });
    expect(scattered.results.biasDetected).toBe(false);
    expect(scattered.results.biasAdjustmentFactor).toBe(1);
  });
  it('identical large differences give Sd = 0 exactly, not NaN from cancellation', () => {
    const big = Array.from({ length: 10 }, (_, i) => 1e8 + i * 0.1);
    const same = calculate('relative-accuracy', { referenceValues: big, monitorValues: big.map((v) => v - 3.3) });
    expect(same.results.stdDevDifference).toBeLessThan(1e-6);
    expect(Number.isFinite(same.results.relativeAccuracy_pct)).toBe(true);
  });
});

describe('traverse-points, worked by hand from Method 1 (Table 1-2 and §11.3.2.1)', () => {
  type Point = { index: number; percentOfDiameter: number; distanceFromWall_in: number; distanceFromPortEnd_in: number; relocated: boolean };
  it('24 in. stack, 12 points: 2.13 % × 24 in. = 0.511 in., not closer than 0.50 in., so it stays (hand)', () => {
    const r = calculate('traverse-points', { stackDiameter_in: 24, pointsPerDiameter: 12, portLength_in: 6 });
    const pts = r.results.points as Point[];
    const first = 50 * (1 - Math.sqrt(11 / 12)); // ring 6 of 6
    close(pts[0].percentOfDiameter, first);
    close(pts[0].distanceFromWall_in, (first / 100) * 24); // 0.511 in. ≥ 0.50 in.
    expect(pts[0].relocated).toBe(false);
    close(pts[0].distanceFromPortEnd_in, (first / 100) * 24 + 6);
  });
  it('20 in. stack, 12 points: the outermost points move to 0.50 in. from each wall and are flagged', () => {
    const r = calculate('traverse-points', { stackDiameter_in: 20, pointsPerDiameter: 12 });
    const pts = r.results.points as Point[];
    expect(pts[0].distanceFromWall_in).toBe(0.5);
    expect(pts[0].relocated).toBe(true);
    close(pts[0].percentOfDiameter, 50 * (1 - Math.sqrt(11 / 12))); // the equal-area value is kept
    expect(pts[11].distanceFromWall_in).toBe(19.5);
    expect(pts[11].relocated).toBe(true);
    expect(pts.filter((p) => p.relocated)).toHaveLength(2);
    expect(r.warnings).toHaveLength(2);
    expect(r.warnings[0]).toMatch(/relocated/);
  });
  it('30 in. stack, 24 points: points within 1.00 in. of a wall move to 1.00 in. (stacks over 24 in.)', () => {
    const r = calculate('traverse-points', { stackDiameter_in: 30, pointsPerDiameter: 24 });
    const pts = r.results.points as Point[];
    // Ring 12 and 11 of 12: 50(1 − √(23/24)) = 1.05 % → 0.32 in.; 50(1 − √(21/24)) = 3.23 % → 0.97 in.
    expect(pts.slice(0, 2).map((p) => p.distanceFromWall_in)).toEqual([1, 1]);
    expect(pts.slice(-2).map((p) => p.distanceFromWall_in)).toEqual([29, 29]);
    expect(pts[2].relocated).toBe(false);
    const distances = pts.map((p) => p.distanceFromWall_in);
    expect([...distances].sort((a, b) => a - b)).toEqual(distances);
  });
});
