/** Choice lists shared by the schemas (form options) and the engine (its lookup tables are keyed by these). */

/** Pollutants with a published lb/scf-per-ppm factor, or a custom molecular weight. */
export const massRatePollutants = {
  SO2: 'Sulfur dioxide (SO₂)',
  NOx: 'Nitrogen oxides (as NO₂)',
  CO: 'Carbon monoxide (CO)',
  custom: 'Other (give its molecular weight)',
} as const;
export type MassRatePollutant = keyof typeof massRatePollutants;

/** Gases for ppmv ⇄ mg/m³ conversion; molecular weights come from their formulas. */
export const gasPollutants = {
  SO2: 'Sulfur dioxide (SO₂)',
  NO: 'Nitric oxide (NO)',
  NO2: 'Nitrogen dioxide (NO₂)',
  NOx: 'Nitrogen oxides (as NO₂)',
  CO: 'Carbon monoxide (CO)',
  CO2: 'Carbon dioxide (CO₂)',
  O3: 'Ozone (O₃)',
  NH3: 'Ammonia (NH₃)',
  H2S: 'Hydrogen sulfide (H₂S)',
  HCl: 'Hydrogen chloride (HCl)',
  HF: 'Hydrogen fluoride (HF)',
  CH4: 'Methane (CH₄)',
  C3H8: 'Propane (C₃H₈)',
  HCHO: 'Formaldehyde (HCHO)',
} as const;
export type GasPollutant = keyof typeof gasPollutants;

/** Fuels of Method 19, Table 19-2. */
export const fuels = {
  naturalGas: 'Natural gas',
  propane: 'Propane',
  butane: 'Butane',
  residualOil: 'Residual oil',
  distillateOil: 'Distillate oil',
  anthracite: 'Anthracite coal',
  bituminousCoal: 'Bituminous coal',
  subbituminousCoal: 'Subbituminous coal',
  lignite: 'Lignite',
  wood: 'Wood',
  woodBark: 'Wood bark',
  municipalSolidWaste: 'Municipal solid waste',
} as const;
export type Fuel = keyof typeof fuels;

export const mixingRatioUnits = {
  ppm: 'parts per million (ppm)',
  ppb: 'parts per billion (ppb)',
  ppt: 'parts per trillion (ppt)',
} as const;
export type MixingRatioUnit = keyof typeof mixingRatioUnits;
/** Parts per whole for each mixing-ratio unit (a fraction is value / parts). */
export const mixingRatioParts: Readonly<Record<MixingRatioUnit, number>> = { ppm: 1e6, ppb: 1e9, ppt: 1e12 };

export const concentrationUnits = {
  ppmv: 'ppmv',
  'mg/m3': 'mg/m³',
} as const;
export type ConcentrationUnit = keyof typeof concentrationUnits;
