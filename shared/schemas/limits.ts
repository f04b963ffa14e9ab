/**
 * Limits defined once, used by the schemas, the server's work budget and the
 * client's forms alike.
 */

/** Longest name of a person, project, buildup or saved search (the columns are VARCHAR(120)). */
export const NAME_MAX = 120;

/** Monte Carlo draws: the engine's default, and the smallest and largest a caller may ask for. */
export const DRAWS_DEFAULT = 1000;
export const DRAWS_MIN = 10;
export const DRAWS_MAX = 100_000;
