/**
 * Text limits of the forms, read from the shared zod schemas the server
 * validates with (`z.string().max(n)`), so a field's `maxlength` never drifts
 * from what the API accepts. Re-declaring a number here or in a component
 * would be a second source; add a field to `TEXT_LIMITS` instead.
 */
import { createBuildupSchema } from '../../shared/schemas/buildups';
import { analogueUpdateSchema, promoteSchema } from '../../shared/schemas/analogues';
import { createProjectSchema } from '../../shared/schemas/projects';
import { createSectionSchema } from '../../shared/schemas/sections';
import { createUserSchema } from '../../shared/schemas/users';

interface SchemaLike {
  maxLength?: number | null;
  _zod?: { def?: { type?: string; innerType?: unknown; out?: unknown; in?: unknown } };
}

/**
 * The `max` length of a string schema, looking through optional, nullable,
 * default, preprocess/pipe and similar wrappers; throws when there is none
 * (a field without a limit must not silently get an input without one).
 */
export function maxLengthOf(schema: unknown, what = 'field'): number {
  let s = schema as SchemaLike | undefined;
  for (let depth = 0; s && depth < 10; depth++) {
    if (typeof s.maxLength === 'number') return s.maxLength;
    const def = s._zod?.def;
    if (!def) break;
    if (def.type === 'pipe') {
      // A preprocess is a pipe from a transform into the real schema; a transform out of a string keeps the string's limit.
      const out = def.out as SchemaLike | undefined;
      s = out?._zod?.def?.type === 'transform' ? (def.in as SchemaLike) : out;
    } else s = def.innerType as SchemaLike | undefined;
  }
  throw new Error(`maxLengthOf: ${what} has no maximum length`);
}

export const TEXT_LIMITS = {
  buildupName: maxLengthOf(createBuildupSchema.shape.name, 'buildup name'),
  projectName: maxLengthOf(createProjectSchema.shape.name, 'project name'),
  projectDescription: maxLengthOf(createProjectSchema.shape.description, 'project description'),
  userName: maxLengthOf(createUserSchema.shape.name, 'user name'),
  sectionTitle: maxLengthOf(createSectionSchema.shape.title, 'section title'),
  sectionLineName: maxLengthOf(createSectionSchema.shape.lineName, 'line name'),
  sectionSurvey: maxLengthOf(createSectionSchema.shape.survey, 'survey'),
  sectionNotes: maxLengthOf(createSectionSchema.shape.notes, 'section notes'),
  sectionPolarityNote: maxLengthOf(createSectionSchema.shape.polarityNote, 'polarity note'),
  analogueName: maxLengthOf(promoteSchema.shape.name, 'analogue name'),
  analogueNotes: maxLengthOf(promoteSchema.shape.notes, 'analogue notes'),
  analogueClassReason: maxLengthOf(analogueUpdateSchema.shape.classOverrideReason, 'class override reason'),
} as const;
