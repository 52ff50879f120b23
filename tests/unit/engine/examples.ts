/** One realistic, valid input set per calculation (field values a crew could meet; not check values). */
import type { CalculationId } from '../../../shared/calculations/ids';
import type { CalculationInput } from '../../../shared/calculations/schemas';

export const examples: { [I in CalculationId]: CalculationInput<I> } = {
  'traverse-points': { stackDiameter_in: 48, pointsPerDiameter: 12, portLength_in: 4 },
  'gas-composition': { co2_pct: 12.4, o2_pct: 6.1, co_pct: 0, moistureFraction: 0.11 },
  moisture: {
    condensateGain_ml: 112.5,
    silicaGelGain_g: 9.8,
    meterVolume_ft3: 36.42,
    meterFactorY: 0.998,
    barometric_inHg: 29.62,
    orificePressure_inH2O: 1.45,
    meterTemp_F: 84,
    stackTemp_F: 285,
    absoluteStackPressure_inHg: 29.5,
  },
  'stack-flow': {
    deltaP_inH2O: [0.42, 0.51, 0.58, 0.62, 0.6, 0.55, 0.44, 0.52, 0.59, 0.63, 0.61, 0.53],
    stackTemp_F: 285,
    barometric_inHg: 29.62,
    staticPressure_inH2O: -0.62,
    pitotCoefficient: 0.84,
    dryMolecularWeight: 30.2,
    moistureFraction: 0.11,
    stackDiameter_in: 48,
  },
  isokinetic: {
    stackTemp_F: 285,
    meterVolumeStd_dscf: 38.2,
    absoluteStackPressure_inHg: 29.57,
    velocity_fps: 41.3,
    nozzleDiameter_in: 0.25,
    sampleTime_min: 72,
    moistureFraction: 0.11,
  },
  particulate: { filterCatch_mg: 18.7, meterVolumeStd_dscf: 38.2, dryStdFlow_dscfh: 1.9e6 },
  'mass-emission-rate': { concentration_ppmvd: 142, pollutant: 'SO2', dryStdFlow_dscfh: 4.2e7 },
  'f-factor-rate': { concentration_ppmvd: 38, pollutant: 'NOx', o2Dry_pct: 3.4, fuel: 'naturalGas' },
  'diluent-correction': { concentration: 41.5, measuredO2_pct: 8.2, referenceO2_pct: 3 },
  'concentration-conversion': { value: 25, from: 'ppmv', pollutant: 'NO2' },
  'number-density': { mixingRatio: 40, mixingRatioUnit: 'ppb', temperature_K: 288.15, pressure_hPa: 1013.25 },
  'chemical-lifetime': { rateConstant_cm3PerMoleculeS: 6.4e-15, oxidantNumberDensity_perCm3: 1e6 },
  'analyzer-checks': {
    span: 100,
    calibrationGases: [
      { certified: 0, directResponse: 0.3 },
      { certified: 50.2, directResponse: 50.6 },
      { certified: 100, directResponse: 99.1 },
    ],
    systemBias: { zero: { certified: 0, pre: 0.6, post: 0.9 }, upscale: { certified: 50.2, pre: 49.8, post: 49.3 } },
    runAverage: 37.4,
  },
  'relative-accuracy': {
    referenceValues: [101.2, 98.7, 103.4, 99.9, 100.8, 97.6, 102.1, 100.3, 99.2],
    monitorValues: [99.8, 97.9, 101.6, 99.1, 100.2, 97.1, 100.9, 99.4, 98.8],
  },
};
