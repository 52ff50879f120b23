/**
 * Exact unit definitions (SI and the international yard-and-pound agreement) for display,
 * forms and the engine's SI-based calculations. The EPA methods keep their own rounded
 * constants (460, 13.6, 0.028317 ...); those live with the methods in server/engine/, not here.
 * Browser-safe: no Node imports.
 */

/** K = °C + 273.15 (SI definition of the Celsius scale). */
export const KELVIN_AT_ZERO_CELSIUS = 273.15;
/** °R = °F + 459.67 (exact; Methods 2–5 round this to 460). */
export const RANKINE_AT_ZERO_FAHRENHEIT = 459.67;
/** 1 in = 0.0254 m (international yard and pound agreement, 1959). */
export const METRES_PER_INCH = 0.0254;
/** 1 ft = 0.3048 m (same agreement). */
export const METRES_PER_FOOT = 0.3048;
/** 1 ft³ = 0.3048³ m³ = 0.028316846592 m³ (exact; Method 5 rounds to 0.028317). */
export const CUBIC_METRES_PER_CUBIC_FOOT = METRES_PER_FOOT ** 3;
/** 1 lb = 0.45359237 kg (exact, international pound). */
export const KILOGRAMS_PER_POUND = 0.45359237;
/** 1 lb = 7000 gr (exact, definition of the grain). */
export const GRAINS_PER_POUND = 7000;
/** 1 gr = 64.79891 mg (exact, follows from the two definitions above). */
export const MILLIGRAMS_PER_GRAIN = 64.79891;
/** Conventional millimetre of mercury: 13.5951 g/cm³ × 9.80665 m/s² × 1 mm = 133.322387415 Pa (NIST SP 811). */
export const PASCALS_PER_MM_HG = 133.322387415;
/** Conventional inch of mercury = 25.4 conventional mm Hg = 3386.389 Pa (NIST SP 811). */
export const PASCALS_PER_IN_HG = 25.4 * PASCALS_PER_MM_HG;
/** Conventional inch of water: 1000 kg/m³ × 9.80665 m/s² × 0.0254 m = 249.08891 Pa (NIST SP 811). */
export const PASCALS_PER_IN_H2O = 1000 * 9.80665 * METRES_PER_INCH;

export const fahrenheitToCelsius = (f: number): number => (f - 32) / 1.8;
export const celsiusToFahrenheit = (c: number): number => c * 1.8 + 32;
export const celsiusToKelvin = (c: number): number => c + KELVIN_AT_ZERO_CELSIUS;
export const kelvinToCelsius = (k: number): number => k - KELVIN_AT_ZERO_CELSIUS;
export const fahrenheitToRankine = (f: number): number => f + RANKINE_AT_ZERO_FAHRENHEIT;
export const rankineToKelvin = (r: number): number => r / 1.8;

export const inHgToKPa = (inHg: number): number => (inHg * PASCALS_PER_IN_HG) / 1000;
export const kPaToInHg = (kPa: number): number => (kPa * 1000) / PASCALS_PER_IN_HG;
export const mmHgToKPa = (mmHg: number): number => (mmHg * PASCALS_PER_MM_HG) / 1000;
export const inHgToMmHg = (inHg: number): number => inHg * 25.4;
export const mmHgToInHg = (mmHg: number): number => mmHg / 25.4;
export const inH2OToInHg = (inH2O: number): number => (inH2O * PASCALS_PER_IN_H2O) / PASCALS_PER_IN_HG;

export const cubicFeetToCubicMetres = (ft3: number): number => ft3 * CUBIC_METRES_PER_CUBIC_FOOT;
export const cubicMetresToCubicFeet = (m3: number): number => m3 / CUBIC_METRES_PER_CUBIC_FOOT;
export const poundsToKilograms = (lb: number): number => lb * KILOGRAMS_PER_POUND;
export const kilogramsToPounds = (kg: number): number => kg / KILOGRAMS_PER_POUND;
