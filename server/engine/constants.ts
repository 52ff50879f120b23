/**
 * Constants shared by Methods 2, 4 and 5 (40 CFR Part 60, Appendix A), as the methods print them.
 * Methods keep these rounded values on purpose: the trade's numbers must match the method's own
 * arithmetic (exact conversions are in shared/units.ts).
 */

/** °R = °F + 460 (Methods 2, 4 and 5 nomenclature; the exact offset is 459.67). */
export const RANKINE_OFFSET = 460;
/** in. H2O per in. Hg, as in Pbar + Pg/13.6 and Pbar + ΔH/13.6 (Methods 2, 4 and 5; conventional ratio 13.595). */
export const IN_H2O_PER_IN_HG = 13.6;
/** EPA standard temperature, 68 °F = 528 °R (Method 2, §12 nomenclature, Tstd). */
export const STD_TEMP_R = 528;
/** EPA standard pressure, 29.92 in. Hg (Method 2, §12 nomenclature, Pstd). */
export const STD_PRESSURE_IN_HG = 29.92;
export { AMBIENT_O2_PCT } from '../../shared/calculations/limits';
export const SECONDS_PER_MINUTE = 60;
export const SECONDS_PER_HOUR = 3600;
export const MINUTES_PER_HOUR = 60;
