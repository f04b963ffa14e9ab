/**
 * The forms' text limits come from the shared schemas: each limit is the
 * largest length the schema accepts (n passes, n + 1 is refused), so a
 * `maxlength` built from TEXT_LIMITS matches the API.
 */
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { maxLengthOf, TEXT_LIMITS } from '../../../client/composables/limits';
import { createBuildupSchema } from '../../../shared/schemas/buildups';
import { createProjectSchema } from '../../../shared/schemas/projects';
import { createSectionSchema } from '../../../shared/schemas/sections';
import { promoteSchema } from '../../../shared/schemas/analogues';

const accepts = (schema: z.ZodType, value: string) => schema.safeParse(value).success;

describe('TEXT_LIMITS', () => {
  it.each([
    ['buildupName', createBuildupSchema.shape.name],
    ['projectName', createProjectSchema.shape.name],
    ['sectionTitle', createSectionSchema.shape.title],
    ['sectionLineName', createSectionSchema.shape.lineName],
    ['sectionNotes', createSectionSchema.shape.notes],
    ['analogueName', promoteSchema.shape.name],
    ['analogueNotes', promoteSchema.shape.notes],
  ] as const)('%s is the longest text the schema accepts', (key, schema) => {
    const n = TEXT_LIMITS[key];
    expect(Number.isInteger(n) && n > 0).toBe(true);
    expect(accepts(schema as z.ZodType, 'a'.repeat(n))).toBe(true);
    expect(accepts(schema as z.ZodType, 'a'.repeat(n + 1))).toBe(false);
  });

  it('looks through optional, nullable, default and preprocess wrappers', () => {
    const inner = z.string().max(37);
    expect(maxLengthOf(inner.optional().nullable().default('x'))).toBe(37);
    expect(maxLengthOf(z.preprocess((v) => v, inner.optional()))).toBe(37);
  });

  it('refuses a field without a limit instead of guessing one', () => {
    expect(() => maxLengthOf(z.string().optional(), 'free text')).toThrow(/free text has no maximum length/);
  });
});
