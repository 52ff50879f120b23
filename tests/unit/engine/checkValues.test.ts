/**
 * Published check values (ENGINE.md, "Check values"). Each expectation names its source.
 * Tolerance 0.1 % relative unless stated.
 */
import { describe, expect, it } from 'vitest';
import jStat from 'jstat';
import { evaluate, unit, type Unit } from 'mathjs';
import { calculate } from '../../../server/engine';
import { AVOGADRO_PER_MOL, BOLTZMANN_J_PER_K, GAS_CONSTANT_J_PER_MOL_K } from '../../../server/engine/ambient';
import { waterVaporPressure_mmHg } from '../../../server/engine/method4';
import { T_975_BY_RUNS } from '../../../server/engine/ps2';

const REL = 1e-3;
const close = (actual: number, expected: number, rel = REL) =>
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * rel);

type Point = { index: number; percentOfDiameter: number; distanceFromWall_in: number; relocated: boolean };
const points = (pointsPerDiameter: number, stackDiameter_in = 100) =>
  calculate('traverse-points', { stackDiameter_in, pointsPerDiameter }).results.points as Point[];

describe('Method 1, Table 1-2: percent of diameter from the inside wall (table rounded to 0.1: within 0.05)', () => {
  const table: Record<number, number[]> = {
    4: [6.7, 25.0, 75.0, 93.3], // Method 1, Table 1-2
    6: [4.4, 14.6, 29.6, 70.4, 85.4, 95.6], // Method 1, Table 1-2
    8: [3.2, 10.5, 19.4, 32.3, 67.7, 80.6, 89.5, 96.8], // Method 1, Table 1-2
    12: [2.1, 6.7, 11.8, 17.7, 25.0, 35.6, 64.4, 75.0, 82.3, 88.2, 93.3, 97.9], // Method 1, Table 1-2
    10: [2.6, 8.2, 14.6, 22.6, 34.2, 65.8, 77.4, 85.4, 91.8, 97.4], // Method 1, Table 1-2 (from memory)
  };
  for (const [count, expected] of Object.entries(table)) {
    it(`${count} points per diameter (Method 1, Table 1-2${count === '10' ? ', from memory' : ''})`, () => {
      const result = points(Number(count));
      expect(result.map((p) => p.index)).toEqual(expected.map((_, i) => i + 1));
      result.forEach((p, i) => expect(Math.abs(p.percentOfDiameter - expected[i])).toBeLessThanOrEqual(0.05));
    });
  }

  it('in a 100 in. stack no 12-point location needs relocating, and distances are percent × D (Method 1, Table 1-2)', () => {
    for (const p of points(12, 100)) {
      expect(p.relocated).toBe(false);
      close(p.distanceFromWall_in, p.percentOfDiameter);
    }
  });
});

describe('Part 75, App. F, Table 1 and Method 19, Table 19-1: ppm to lb/scf', () => {
  it('1 ppm SO2 = 1.660e-7 lb/scf (Part 75 App. F Table 1; Method 19 Table 19-1)', () => {
    const r = calculate('mass-emission-rate', { concentration_ppmvd: 1, pollutant: 'SO2', dryStdFlow_dscfh: 1 });
    expect(r.results.conversionFactor_lbPerScfPpm).toBe(1.66e-7);
  });
  it('1 ppm NOx (as NO2) = 1.194e-7 lb/scf (Part 75 App. F Table 1; Method 19 Table 19-1)', () => {
    const r = calculate('mass-emission-rate', { concentration_ppmvd: 1, pollutant: 'NOx', dryStdFlow_dscfh: 1 });
    expect(r.results.conversionFactor_lbPerScfPpm).toBe(1.194e-7);
  });
  it('the published factors are MW/385.3e6 rounded, within 0.2 % (IUPAC atomic weights: SO2 64.058, NO2 46.005)', () => {
    close(1.66e-7, 64.058 / 385.3e6, 2e-3);
    close(1.194e-7, 46.005 / 385.3e6, 2e-3);
  });
  it('385.3 scf/lb-mol is the ideal-gas molar volume at 68 °F and 29.92 in. Hg (CODATA R via mathjs units, within 0.05 %)', () => {
    // in. Hg (conventional) = 25.4 mm Hg; mathjs has mm Hg.
    const pressure_Pa = unit(29.92 * 25.4, 'mmHg').toNumber('Pa');
    const temperature_K = unit(68, 'degF').toNumber('K');
    const molesPerLbMol = unit(1, 'lb').toNumber('g');
    const m3PerLbMol = ((8.314462618 * temperature_K) / pressure_Pa) * molesPerLbMol;
    close(385.3, unit(m3PerLbMol, 'm^3').toNumber('ft^3'), 5e-4);
  });
});

describe('Method 19, Table 19-2: F factors', () => {
  it('natural gas Fd = 8,710 dscf/MMBtu (Method 19, Table 19-2)', () => {
    const r = calculate('f-factor-rate', { concentration_lbPerDscf: 1e-6, o2Dry_pct: 3, fuel: 'naturalGas' });
    expect(r.results.fdFactor_dscfPerMMBtu).toBe(8710);
  });
  it('natural gas Fc = 1,040 scf CO2/MMBtu (Method 19, Table 19-2)', () => {
    const r = calculate('f-factor-rate', { concentration_lbPerDscf: 1e-6, co2Dry_pct: 10, fuel: 'naturalGas' });
    expect(r.results.fcFactor_scfPerMMBtu).toBe(1040);
  });
  it('Fd values in ENGINE.md for the other fuels (Method 19, Table 19-2, from memory)', () => {
    const fd: Record<string, number> = {
      propane: 8710,
      butane: 8710,
      residualOil: 9190,
      distillateOil: 9190,
      bituminousCoal: 9780,
      subbituminousCoal: 9820,
      lignite: 9860,
      anthracite: 10100,
      wood: 9240,
      woodBark: 9600,
      municipalSolidWaste: 9570,
    };
    for (const [fuel, value] of Object.entries(fd)) {
      const r = calculate('f-factor-rate', { concentration_lbPerDscf: 1e-6, o2Dry_pct: 3, fuel: fuel as 'propane' });
      expect(r.results.fdFactor_dscfPerMMBtu, fuel).toBe(value);
    }
  });
});

describe('PS-2, Table 2-1: t0.975 for n − 1 degrees of freedom', () => {
  it('n = 9 → 2.306, n = 10 → 2.262, n = 12 → 2.201 (PS-2, Table 2-1)', () => {
    const run = (n: number) =>
      calculate('relative-accuracy', {
        referenceValues: Array.from({ length: n }, (_, i) => 100 + i),
        monitorValues: Array.from({ length: n }, (_, i) => 99 + i * 1.01),
      }).results.tValue;
    expect(run(9)).toBe(2.306);
    expect(run(10)).toBe(2.262);
    expect(run(12)).toBe(2.201);
  });
  it('every tabulated t0.975 (n = 2 to 16) matches jStat.studentt.inv(0.975, n − 1) to the table’s 3 decimals', () => {
    const runs = Object.keys(T_975_BY_RUNS).map(Number);
    expect(runs).toEqual(Array.from({ length: 15 }, (_, i) => i + 2));
    for (const n of runs) {
      const reference = jStat.studentt.inv(0.975, n - 1);
      expect(Math.abs(T_975_BY_RUNS[n] - reference), `n = ${n}`).toBeLessThanOrEqual(0.0005 + 1e-12);
    }
  });
});

describe('CODATA 2018 constants and ideal-gas check values', () => {
  it('kB = 1.380649e-23 J/K and NA = 6.02214076e23 /mol, exact (CODATA 2018)', () => {
    expect(BOLTZMANN_J_PER_K).toBe(1.380649e-23);
    expect(AVOGADRO_PER_MOL).toBe(6.02214076e23);
  });
  it('R = NA·kB = 8.314462618 J/(mol K) (CODATA 2018), and agrees with mathjs gasConstant', () => {
    close(GAS_CONSTANT_J_PER_MOL_K, 8.314462618, 1e-9);
    close(GAS_CONSTANT_J_PER_MOL_K, (evaluate('gasConstant') as Unit).toNumber('J / (K mol)'), 1e-9);
  });
  it('air at 101.325 kPa: 2.4615e19 /cm³ at 298.15 K, 2.5469e19 at 288.15 K (CODATA 2018 kB; ENGINE.md check values)', () => {
    const air = (temperature_K: number) =>
      calculate('number-density', { numberDensity_perCm3: 0, temperature_K, pressure_hPa: 1013.25 }).results
        .airNumberDensity_perCm3 as number;
    close(air(298.15), 2.4615e19);
    close(air(288.15), 2.5469e19);
    // Trade fact (common knowledge, no source): about 2.4–2.5e19 molecules/cm³ at sea level.
    expect(air(288.15)).toBeGreaterThan(2.4e19);
    expect(air(298.15)).toBeLessThan(2.5e19);
  });
  it('1 ppb at 298.15 K and 101.325 kPa = 2.46e10 molecules/cm³ (ENGINE.md check value, 3 significant figures)', () => {
    const r = calculate('number-density', { mixingRatio: 1, mixingRatioUnit: 'ppb', temperature_K: 298.15, pressure_hPa: 1013.25 });
    close(r.results.numberDensity_perCm3 as number, 2.46e10, 5e-3);
  });
  it('molar volume at 101.325 kPa: 22.414 L at 0 °C, 24.055 L at 20 °C, 24.465 L at 25 °C (ideal gas, CODATA R)', () => {
    const vm = (temperature_C: number) =>
      calculate('concentration-conversion', { value: 1, from: 'ppmv', molecularWeight: 64, temperature_C, pressure_kPa: 101.325 })
        .results.molarVolume_L as number;
    close(vm(0), 22.414);
    close(vm(20), 24.055);
    close(vm(25), 24.465);
  });
  it('the default conditions are 20 °C and 101.325 kPa (ENGINE.md), giving 24.055 L/mol', () => {
    const r = calculate('concentration-conversion', { value: 1, from: 'ppmv', molecularWeight: 64 });
    close(r.results.molarVolume_L as number, 24.055);
  });
});

describe('Antoine vapor pressure of water', () => {
  it('water boils at 100 °C at 760 mm Hg: 760 ± 1 mm Hg (ENGINE.md check value)', () => {
    expect(Math.abs(waterVaporPressure_mmHg(100) - 760)).toBeLessThanOrEqual(1);
  });
  it('the moisture calculation reports 29.92 ± 0.04 in. Hg (760 ± 1 mm Hg) at 212 °F', () => {
    const r = calculate('moisture', {
      condensateGain_ml: 50,
      meterVolume_ft3: 30,
      meterFactorY: 1,
      barometric_inHg: 29.92,
      orificePressure_inH2O: 0,
      meterTemp_F: 68,
      stackTemp_F: 212,
      absoluteStackPressure_inHg: 40,
    });
    expect(Math.abs((r.results.waterVaporPressure_inHg as number) - 29.92)).toBeLessThanOrEqual(1 / 25.4);
  });
  it('20 °C: 17.55 mm Hg and 60 °C: 149.6 mm Hg, within 1 % (IAPWS steam tables 2.339 kPa and 19.95 kPa; from memory)', () => {
    expect(Math.abs(waterVaporPressure_mmHg(20) / 17.55 - 1)).toBeLessThan(0.01);
    expect(Math.abs(waterVaporPressure_mmHg(60) / 149.6 - 1)).toBeLessThan(0.01);
  });
});
