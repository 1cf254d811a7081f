/**
 * How far a number a person types for a run may go before it is a slip, not a value:
 * one place for the command line's checks (record's metadata, combine's --value and
 * summary CSVs, calibrate's path length). The bounds are ours and wide on purpose, far
 * outside any bench run in solution; they catch an exponent typed by mistake (1e300 M,
 * 2500 °C), which would otherwise give an activation energy or an order that looks real.
 */

/** Solution kinetics from a freezing mixture to a sealed tube: −100 to 500 °C. */
export const TEMPERATURE_RANGE_C: readonly [number, number] = [-100, 500];
/** Above 0 and at most 100 mol/L (pure water is 55 mol/L). */
export const CONCENTRATION_MAX_M = 100;
/** From the far UV to the near infrared: 100 to 5000 nm. */
export const WAVELENGTH_RANGE_NM: readonly [number, number] = [100, 5000];
/** Above 0 and at most 100 cm (the longest cells are tens of centimetres). */
export const PATH_MAX_CM = 100;

export const plausible = {
  temperature_C: (v: number): boolean => v >= TEMPERATURE_RANGE_C[0] && v <= TEMPERATURE_RANGE_C[1],
  concentration_M: (v: number): boolean => v > 0 && v <= CONCENTRATION_MAX_M,
  wavelength_nm: (v: number): boolean => v >= WAVELENGTH_RANGE_NM[0] && v <= WAVELENGTH_RANGE_NM[1],
  path_cm: (v: number): boolean => v > 0 && v <= PATH_MAX_CM,
};

/** The words for each range, as the refusals say them. */
export const PLAUSIBLE_WORDS = {
  temperature_C: `a temperature in °C from ${TEMPERATURE_RANGE_C[0]} to ${TEMPERATURE_RANGE_C[1]}`,
  concentration_M: `a concentration in mol/L above 0 and at most ${CONCENTRATION_MAX_M}`,
  wavelength_nm: `a wavelength in nm from ${WAVELENGTH_RANGE_NM[0]} to ${WAVELENGTH_RANGE_NM[1]}`,
  path_cm: `a path length in cm above 0 and at most ${PATH_MAX_CM} (e.g. 1.00)`,
};

/** A random seed: a whole number from 0 to 2³² − 1 (the generator takes 32 bits; a larger one would silently wrap). */
export const seedCheck = (v: number): boolean => Number.isInteger(v) && v >= 0 && v <= 0xffffffff;
export const SEED_WORDS = 'a whole number from 0 to 4294967295';
/**
 * A playing speed (device seconds per real second): 0.01 to 10000. Outside it the time
 * between readings leaves what a timer can wait for (a few weeks) or what a line carries.
 */
export const speedCheck = (v: number): boolean => v >= 0.01 && v <= 10_000;
export const SPEED_WORDS = 'a speed factor from 0.01 to 10000';
/** The advice's target: above 0 and at most 20 half-lives (99.9999% converted). */
export const halfLivesCheck = (v: number): boolean => v > 0 && v <= 20;
export const HALF_LIVES_WORDS = 'a number of half-lives above 0 and at most 20';
