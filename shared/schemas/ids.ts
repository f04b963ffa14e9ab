/**
 * Path parameters that name a stored row (`:id`, `:sectionId`, `:userId`, …):
 * one rule for every route. Decimal digits only (no sign, exponent, hex or
 * spaces), at least 1 and at most `ID_MAX`, the largest PostgreSQL `integer`
 * (PostgreSQL manual, §8.1.1 "Integer Types"), so an id never reaches the
 * database as a value its column cannot hold (that was a 500). Kept versions
 * (`:version`) are whole numbers from 0 under the same bound.
 */
import { z } from 'zod';

export const ID_MAX = 2_147_483_647;
const ID_MESSAGE = 'must be a positive whole number';
const WHOLE_MESSAGE = 'must be a whole number ≥ 0';

/** A row id given as a path parameter (a string), parsed to a number. */
export const idParamSchema = z
  .string({ error: ID_MESSAGE })
  .regex(/^[1-9]\d{0,9}$/, ID_MESSAGE)
  .transform(Number)
  .refine((n) => n <= ID_MAX, `must be at most ${ID_MAX}`);

/** A whole number ≥ 0 given as a path parameter (a kept version). */
export const wholeParamSchema = z
  .string({ error: WHOLE_MESSAGE })
  .regex(/^(0|[1-9]\d{0,9})$/, WHOLE_MESSAGE)
  .transform(Number)
  .refine((n) => n <= ID_MAX, `must be at most ${ID_MAX}`);
