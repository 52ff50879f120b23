/** Values that both validation (shared schemas) and the engine's arithmetic use; each defined once. */

/**
 * O2 in ambient air, % by volume: the 20.9 of Method 19, Eq. 19-1 and of the O2 corrections in
 * Part 60 subparts. A measured or reference O2 at or above it makes the correction meaningless.
 */
export const AMBIENT_O2_PCT = 20.9;
