/**
 * Realistic field values shared by several generators. Ranges follow ENGINE.md ("Drills and
 * grading": stack temperatures 150–900 °F, Δp 0.05–2.5 in. H2O, O2 2–16 %, moisture 2–35 %,
 * diameters 12–240 in.); the rest are common field practice, no source.
 */
import { calculate } from '../index';
import { numberAt } from './define';
import { roundTo, type Draw } from './random';

export const STACK_TEMP_F = { min: 150, max: 900 } as const;
export const DELTA_P_IN_H2O = { min: 0.05, max: 2.5 } as const;
export const O2_PCT = { min: 2, max: 16 } as const;
export const MOISTURE_FRACTION = { min: 0.02, max: 0.35 } as const;
export const STACK_DIAMETER_IN = { min: 12, max: 240 } as const;
/** Isokinetic rates a crew could bring back from the field; 90–110 % is what Method 5 accepts. */
export const ISOKINETIC_PCT = { min: 80, max: 120 } as const;
/** Stay this far below saturation so that no sheet is supersaturated once values are rounded. */
export const SATURATION_MARGIN = 0.95;

/** Barometric pressure across the altitudes crews work at, in. Hg, read to 0.01. */
export const drawBarometric = (draw: Draw) => draw.reading(25.0, 30.5, 0.01);
/** Stack static pressure, in. H2O, read to 0.01. */
export const drawStaticPressure = (draw: Draw) => draw.reading(-2.0, 2.0, 0.01);
/** Calibrated Type S pitot coefficient. */
export const drawPitotCoefficient = (draw: Draw) => draw.reading(0.8, 0.87, 0.01);
/** Dry gas meter calibration factor Y, to 0.001. */
export const drawMeterFactor = (draw: Draw) => draw.reading(0.95, 1.05, 0.001);

/** One traverse reading, ports A and B, points numbered from the port-side wall. */
export interface TraverseReading {
  port: string;
  point: number;
  deltaP_inH2O: number;
  stackTemp_F: number;
}

/**
 * A velocity profile over two diameters: lower near the walls, uneven between ports, some scatter, Δp read to 0.01
 * in. H2O and kept within 0.05–2.5; temperatures to the degree, within 150–900 °F.
 */
export function drawTraverse(draw: Draw, pointsPerDiameter: number, meanDeltaP: number, baseTemp_F: number): TraverseReading[] {
  const rows: TraverseReading[] = [];
  for (const port of ['A', 'B']) {
    const portTilt = draw.uniform(0.8, 1.2);
    for (let point = 1; point <= pointsPerDiameter; point++) {
      const across = (point - 0.5) / pointsPerDiameter;
      // Δp near the walls about half of mid-stack: uneven enough that the mean of √Δp and the
      // root of the mean Δp (Eq. 2-9's trap) differ by about 1 %, as on many real traverses
      const profile = 0.45 + 0.75 * Math.sin(Math.PI * across);
      const dp = meanDeltaP * profile * portTilt * draw.uniform(0.85, 1.15);
      const temp = baseTemp_F + draw.uniform(-4, 4);
      rows.push({
        port,
        point,
        deltaP_inH2O: roundTo(clamp(dp, DELTA_P_IN_H2O.min, DELTA_P_IN_H2O.max), 0.01),
        stackTemp_F: roundTo(clamp(temp, STACK_TEMP_F.min, STACK_TEMP_F.max), 1),
      });
    }
  }
  return rows;
}

export function clamp(value: number, min: number, max: number): number {
  return Math.min(max, Math.max(min, value));
}

export function inRange(value: number, range: { min: number; max: number }): boolean {
  return value >= range.min && value <= range.max;
}

/**
 * Moisture fraction at saturation for a stack temperature and absolute pressure, from the engine's
 * own Method 4 calculation (its saturation check; a nominal train is passed and only the
 * saturation result is read), so generators and engine agree on the vapour pressure of water.
 */
export function saturationMoistureFraction(stackTemp_F: number, absoluteStackPressure_inHg: number): number {
  const result = calculate('moisture', {
    condensateGain_ml: 0,
    meterVolume_ft3: 1,
    meterFactorY: 1,
    barometric_inHg: 29.92,
    orificePressure_inH2O: 0,
    meterTemp_F: 68,
    stackTemp_F,
    absoluteStackPressure_inHg,
  });
  return numberAt(result.results, 'saturationMoistureFraction');
}

/** Nominal nozzle sizes a crew carries, in. (1/8 to 1/2 in. by sixteenths). */
export const NOZZLE_SIZES_IN = [0.125, 0.1875, 0.25, 0.3125, 0.375, 0.4375, 0.5] as const;

/** A nozzle as calibrated: the nominal size within a few thousandths, read to 0.001 in. */
export const calibratedNozzle = (draw: Draw, nominal: number) => roundTo(nominal + draw.uniform(-0.003, 0.003), 0.001);

/** O2 and CO2 of combustion gas: CO2 falls as excess air (O2) rises, from a fuel's CO2 maximum. */
export function drawFlueGas(draw: Draw): { o2_pct: number; co2_pct: number } {
  const o2 = draw.reading(O2_PCT.min, O2_PCT.max, 0.1);
  // CO2 at zero excess air: about 11.7 % for natural gas up to about 18.5 % for coal and 20 % for wood
  // (common combustion figures, from memory; only used to keep generated sheets plausible).
  const co2Max = draw.uniform(11.7, 19.5);
  const co2 = roundTo(Math.max(0.5, co2Max * ((20.9 - o2) / 20.9)), 0.1);
  return { o2_pct: o2, co2_pct: co2 };
}
