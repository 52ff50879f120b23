/**
 * Unit conversions cross-checked against mathjs units (an outside units library), and the EPA
 * methods' own rounded constants (460, 13.6, 528/29.92, 0.028317, 0.0154) checked to be the
 * method's rounding of the exact value, and to be what the engine actually uses.
 */
import { describe, expect, it } from 'vitest';
import { unit } from 'mathjs';
import {
  celsiusToFahrenheit,
  celsiusToKelvin,
  cubicFeetToCubicMetres,
  cubicMetresToCubicFeet,
  fahrenheitToCelsius,
  fahrenheitToRankine,
  inH2OToInHg,
  inHgToKPa,
  inHgToMmHg,
  kelvinToCelsius,
  kilogramsToPounds,
  kPaToInHg,
  mmHgToInHg,
  mmHgToKPa,
  poundsToKilograms,
  rankineToKelvin,
  GRAINS_PER_POUND,
  MILLIGRAMS_PER_GRAIN,
} from '../../../shared/units';
import { calculate } from '../../../server/engine';
import { K1_FT3_PER_ML, K3_FT3_PER_G, K4_R_PER_IN_HG } from '../../../server/engine/method4';
import { K2_GR_PER_MG, K_ISOKINETIC, M3_PER_FT3_METHOD5 } from '../../../server/engine/method5';

const close = (actual: number, expected: number, rel = 1e-9) =>
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * rel + 1e-12);

describe('temperatures against mathjs units (°F, °C, K, °R)', () => {
  for (const f of [-40, 32, 68, 212, 850]) {
    it(`${f} °F (mathjs degF → degC, K, degR)`, () => {
      close(fahrenheitToCelsius(f), unit(f, 'degF').toNumber('degC'));
      close(celsiusToKelvin(fahrenheitToCelsius(f)), unit(f, 'degF').toNumber('K'));
      close(fahrenheitToRankine(f), unit(f, 'degF').toNumber('degR'));
      close(rankineToKelvin(fahrenheitToRankine(f)), unit(f, 'degF').toNumber('K'));
    });
  }
  it('round trips °C ⇄ °F and K ⇄ °C (mathjs degC)', () => {
    close(celsiusToFahrenheit(37), unit(37, 'degC').toNumber('degF'));
    close(kelvinToCelsius(300), unit(300, 'K').toNumber('degC'));
  });
  it('Methods 2 and 5 use °R = °F + 460, not the exact 459.67 (method constant, kept on purpose)', () => {
    const r = calculate('isokinetic', {
      stackTemp_F: 68,
      meterVolumeStd_dscf: 30,
      absoluteStackPressure_inHg: 29.92,
      velocity_fps: 40,
      nozzleDiameter_in: 0.25,
      sampleTime_min: 60,
      moistureFraction: 0.1,
    });
    expect(r.results.absoluteStackTemp_R).toBe(528); // Method 5 nomenclature: Ts = ts + 460
    close(unit(68, 'degF').toNumber('degR'), 527.67); // mathjs: the exact Rankine value differs by 0.33
  });
});

describe('pressures against mathjs units (in. Hg, kPa, mm Hg, in. H2O)', () => {
  // mathjs has mmHg and cmH2O; the conventional in. Hg is 25.4 mm Hg, the in. H2O 2.54 cm H2O.
  it('in. Hg ⇄ kPa (mathjs: 25.4 mmHg per in. Hg; mathjs rounds mmHg to 133.322 Pa, so within 0.001 %)', () => {
    close(inHgToKPa(29.92), unit(29.92 * 25.4, 'mmHg').toNumber('kPa'), 1e-5);
    close(kPaToInHg(101.325), unit(101.325, 'kPa').toNumber('mmHg') / 25.4, 1e-5);
  });
  it('mm Hg ⇄ kPa and in. Hg ⇄ mm Hg (mathjs mmHg)', () => {
    close(mmHgToKPa(760), unit(760, 'mmHg').toNumber('kPa'), 1e-5);
    close(inHgToMmHg(1), 25.4);
    close(mmHgToInHg(760), 29.9213, 1e-5); // 760/25.4
  });
  it('1 atm = 29.92 in. Hg to 4 figures (mathjs atm; EPA standard pressure)', () => {
    close(kPaToInHg(unit(1, 'atm').toNumber('kPa')), 29.92, 1e-4);
  });
  it('in. H2O per in. Hg is 13.595 (mathjs cmH2O, mmHg); the methods round it to 13.6', () => {
    const ratio = unit(25.4, 'mmHg').toNumber('Pa') / unit(2.54, 'cmH2O').toNumber('Pa');
    close(1 / inH2OToInHg(1), ratio, 1e-5);
    close(13.6, ratio, 5e-4); // Method 2: Ps = Pbar + Pg/13.6 (rounded)
    // The engine keeps 13.6: 13.6 in. H2O of static pressure adds exactly 1 in. Hg.
    const r = calculate('stack-flow', {
      deltaP_inH2O: [0.5],
      stackTemp_F: 300,
      barometric_inHg: 29,
      staticPressure_inH2O: 13.6,
      dryMolecularWeight: 29,
      moistureFraction: 0.1,
      stackArea_ft2: 10,
    });
    expect(r.results.absoluteStackPressure_inHg).toBe(30);
  });
});

describe('volumes and masses against mathjs units (ft³/m³, lb/kg, grains)', () => {
  it('ft³ ⇄ m³ (mathjs ft^3)', () => {
    close(cubicFeetToCubicMetres(35.3147), unit(35.3147, 'ft^3').toNumber('m^3'));
    close(cubicMetresToCubicFeet(1), unit(1, 'm^3').toNumber('ft^3'));
  });
  it('Method 5 rounds 1 ft³ to 0.028317 m³ (within 0.001 % of mathjs)', () => {
    close(M3_PER_FT3_METHOD5, unit(1, 'ft^3').toNumber('m^3'), 1e-5);
  });
  it('lb ⇄ kg (mathjs lb)', () => {
    close(poundsToKilograms(2.2), unit(2.2, 'lb').toNumber('kg'));
    close(kilogramsToPounds(1), unit(1, 'kg').toNumber('lb'));
  });
  it('7000 gr per lb and 64.79891 mg per gr (mathjs grain)', () => {
    close(GRAINS_PER_POUND, unit(1, 'lb').toNumber('grain'));
    close(MILLIGRAMS_PER_GRAIN, unit(1, 'grain').toNumber('mg'));
  });
  it('Method 5, Eq. 5-6 rounds gr per mg to 0.0154 (exact 0.015432 via mathjs, within 0.3 %)', () => {
    close(K2_GR_PER_MG, unit(1, 'mg').toNumber('grain'), 3e-3);
  });
});

describe('the methods’ published constants are roundings of the physics (catches a mistyped constant)', () => {
  const stdTemp_K = unit(68, 'degF').toNumber('K'); // 68 °F, EPA standard
  const stdPressure_Pa = unit(29.92 * 25.4, 'mmHg').toNumber('Pa'); // 29.92 in. Hg
  const ft3PerMol = unit((8.314462618 * stdTemp_K) / stdPressure_Pa, 'm^3').toNumber('ft^3'); // CODATA R
  const waterMolarMass = 2 * 1.008 + 15.999; // IUPAC standard atomic weights

  it('17.64 °R/in. Hg = Tstd/Pstd = 528/29.92 (Method 4, Eq. 4-3; Method 5, Eq. 5-1), within 0.05 %', () => {
    close(K4_R_PER_IN_HG, 528 / 29.92, 5e-4);
  });
  it('0.04715 ft³/g = molar volume at standard conditions / MW of water (Method 4, Eq. 4-2), within 0.05 %', () => {
    close(K3_FT3_PER_G, ft3PerMol / waterMolarMass, 5e-4);
  });
  it('0.04706 ft³/ml = 0.04715 × density of water near 20 °C, 0.9982 g/ml (Method 4, Eq. 4-1; density from memory, CRC)', () => {
    close(K1_FT3_PER_ML, K3_FT3_PER_G * 0.9982, 5e-4);
  });
  it('0.09450 = 100 × Pstd/(Tstd × 60 s/min) = 100 × 29.92/(528 × 60) (Method 5, Eq. 5-9), within 0.1 %', () => {
    close(K_ISOKINETIC, (100 * 29.92) / (528 * 60), 1e-3);
  });
  it('85.49 is the pitot equation v = √(2Δp/ρ) for air at standard conditions, in English units (Method 2, Eq. 2-9), within 0.1 %', () => {
    // A standard pitot (Cp = 1) in air at 68 °F and 29.92 in. Hg: v = √(2 Δp / ρ).
    const rhoAir = (29.92 * 25.4 * 133.322387415 * 0.02896) / (8.314462618 * stdTemp_K); // kg/m³ (M_air 28.96 g/mol, from memory)
    const dp_Pa = unit(1, 'cmH2O').toNumber('Pa') * 2.54; // 1 in. H2O
    const v_fps = unit(Math.sqrt((2 * dp_Pa) / rhoAir), 'm/s').toNumber('ft/s');
    const kp = v_fps / Math.sqrt(528 / (29.92 * 28.96));
    close(85.49, kp, 1e-3);
  });
});
