/**
 * The shared text primitive and its use in every schema: control characters
 * and broken Unicode are refused with the field's path, multi-line fields
 * keep tab/LF/CR, and no bare `z.string()` is left in shared/schemas.
 */
import { describe, expect, it } from 'vitest';
import type { ZodType } from 'zod';
import { isSafeText, isWellFormedText, safeMultiLine, safeSingleLine, safeText, UNSAFE_TEXT_MESSAGE } from '../../../shared/schemas/text';
import * as auth from '../../../shared/schemas/auth';
import * as users from '../../../shared/schemas/users';
import * as projects from '../../../shared/schemas/projects';
import * as sections from '../../../shared/schemas/sections';
import * as buildups from '../../../shared/schemas/buildups';
import * as interpretation from '../../../shared/schemas/interpretation';
import * as account from '../../../shared/schemas/account';
import * as notifications from '../../../shared/schemas/notifications';
import * as register from '../../../shared/schemas/register';
import * as review from '../../../shared/schemas/review';
import { buildupGeometrySchema } from '../../../shared/editor/model';

const NUL = '\u0000';
const LONE_HIGH = '\ud83c'; // first half of 🌊 (U+1F30A) without its second half
const LONE_LOW = '\udf0a';

describe('safeText', () => {
  it('refuses NUL, other C0 controls, DEL and C1 controls on one line', () => {
    const s = safeText();
    for (const bad of [`a${NUL}b`, 'a\u0001', 'tab\there', 'two\nlines', 'cr\r', 'esc\u001b[0m', 'del\u007f', 'c1\u0085', 'c1\u009f']) {
      const r = s.safeParse(bad);
      expect(r.success, JSON.stringify(bad)).toBe(false);
      expect(r.error!.issues[0].message).toBe(UNSAFE_TEXT_MESSAGE);
    }
  });

  it('keeps tab, line feed and carriage return in multi-line text, refuses the rest', () => {
    const s = safeText({ multiline: true });
    expect(s.safeParse('line one\r\n\tline two\n').success).toBe(true);
    for (const bad of [`a${NUL}`, 'a\u000b', 'a\u000c', 'a\u007f', 'a\u0080']) expect(s.safeParse(bad).success, JSON.stringify(bad)).toBe(false);
  });

  it('refuses lone surrogates and accepts proper pairs and other scripts', () => {
    const s = safeText();
    expect(s.safeParse(`reef ${LONE_HIGH}`).success).toBe(false);
    expect(s.safeParse(`${LONE_LOW} reef`).success).toBe(false);
    expect(s.safeParse(`${LONE_LOW}${LONE_HIGH}`).success).toBe(false); // reversed halves are two lone ones
    for (const ok of ['Kestrel Knoll 🌊', 'Tessel-Becken Übersicht', 'ケストレル', 'Marrow Bank – TB-14 (µs)', '']) expect(s.safeParse(ok).success, ok).toBe(true);
  });

  it('agrees with String.prototype.isWellFormed (ES2024) where Node has it', () => {
    const native = (String.prototype as unknown as { isWellFormed?: () => boolean }).isWellFormed;
    if (!native) return; // Node 20 has it; older runtimes only lack the cross-check, not the primitive
    for (const s of ['a', '🌊', LONE_HIGH, LONE_LOW, `x${LONE_HIGH}y`, `${LONE_HIGH}${LONE_LOW}`, `${LONE_LOW}${LONE_HIGH}`, '\ud800\udc00\ud800'])
      expect(isWellFormedText(s), JSON.stringify(s)).toBe(native.call(s));
  });

  it('checks before trimming, so a control character at an end cannot be trimmed away unseen', () => {
    expect(safeText().trim().safeParse('name\u000b').success).toBe(false); // VT is whitespace to trim()
    expect(isSafeText('name\u000b', true)).toBe(false);
  });
});

/** Parse and return `path: message` lines of the failure (unions opened as the engine and the server report them). */
function refusal(schema: ZodType, input: unknown): string[] {
  const r = schema.safeParse(input);
  expect(r.success, `accepted ${JSON.stringify(input)}`).toBe(false);
  return [...r.error!.issues.map((i) => `${i.path.join('.')}: ${i.message}`), ...interpretation.describeIssues(r.error!).map((i) => i.text)];
}

describe('every free-text field refuses bad text with its path', () => {
  const msg = UNSAFE_TEXT_MESSAGE;
  const cases: [string, ZodType, unknown, string][] = [
    ['project name', projects.createProjectSchema, { name: `Shoal${NUL}` }, 'name'],
    ['project description', projects.createProjectSchema, { name: 'Shoal', description: `x${LONE_HIGH}` }, 'description'],
    ['project update', projects.updateProjectSchema, { name: `Shoal${LONE_LOW}` }, 'name'],
    ['list q', projects.listQuerySchema, { q: `sh${NUL}` }, 'q'],
    ['user name', users.createUserSchema, { email: 'new@tessel.example', name: `Ana${NUL}`, role: 'reviewer' }, 'name'],
    ['user password', users.createUserSchema, { email: 'new@tessel.example', name: 'Ana', role: 'reviewer', password: `long enough${NUL}` }, 'password'],
    ['user update', users.updateUserSchema, { name: `Ana${LONE_HIGH}` }, 'name'],
    ['sign-in password', auth.loginSchema, { email: 'a@tessel.example', password: `pw${NUL}` }, 'password'],
    ['buildup name', buildups.createBuildupSchema, { name: `Kestrel${NUL}` }, 'name'],
    ['section title', sections.createSectionSchema, { title: `TB-11${NUL}`, verticalDomain: 'twt_ms' }, 'title'],
    ['section line', sections.createSectionSchema, { title: 'TB-11', lineName: `TB${LONE_HIGH}`, verticalDomain: 'twt_ms' }, 'lineName'],
    ['section survey', sections.updateSectionSchema, { version: 0, survey: `TB-2024${NUL}` }, 'survey'],
    ['section notes', sections.updateSectionSchema, { version: 0, notes: `ok\n${NUL}` }, 'notes'],
    ['section list q', sections.listSectionsQuerySchema, { q: `${LONE_LOW}` }, 'q'],
    ['systems tract (stored geometry)', buildupGeometrySchema, { base: [], cycles: [{ index: 1, top: [], systemsTract: `HST${NUL}` }], terminations: [], topIsDrowningSurface: false }, 'cycles.0.systemsTract'],
    ['interpretation buildup name', interpretation.buildupSchema, { name: `Kestrel${NUL}`, base: [[0, 0], [1, 0]], cycles: [{ index: 1, top: [[0, 0], [1, 0]], marginLeft: [0, 0], marginRight: [1, 0] }] }, 'name'],
    ['measure seed', interpretation.measureOptionsSchema, { seed: `s${LONE_HIGH}` }, 'seed'],
  ];
  for (const [what, schema, input, path] of cases) {
    it(what, () => {
      expect(refusal(schema, input)).toContain(`${path}: ${msg}`);
    });
  }

  it('multi-line fields keep line breaks and tabs; one-line fields refuse them', () => {
    expect(projects.createProjectSchema.safeParse({ name: 'Shoal', description: 'first\r\n\tsecond' }).success).toBe(true);
    expect(sections.updateSectionSchema.safeParse({ version: 0, notes: 'a\nb', polarityNote: 'SEG normal\n' }).success).toBe(true);
    expect(refusal(projects.createProjectSchema, { name: 'Shoal\nstudy' })).toContain(`name: ${msg}`);
    expect(refusal(sections.updateSectionSchema, { version: 0, title: 'TB\t11' })).toContain(`title: ${msg}`);
  });
});

// ---------------------------------------------------------------------------
// no bare string schema: walk every exported zod schema (zod 4 definitions)

interface Def {
  type: string;
  format?: string;
  checks?: { _zod: { def: { check: string; format?: string; fn?: unknown } } }[];
  [k: string]: unknown;
}
const defOf = (s: unknown): Def | null => ((s as { _zod?: { def?: Def } })?._zod?.def ?? null);

/** Paths of string schemas that carry neither the safe-text check nor a strict format (e-mail, regex, ISO 8601 date-time, enum-like). */
function bareStrings(schema: unknown, path: string, seen = new Set<unknown>()): string[] {
  const def = defOf(schema);
  if (!def || seen.has(schema)) return [];
  seen.add(schema);
  const kids = (xs: [unknown, string][]) => xs.flatMap(([s, p]) => bareStrings(s, p, seen));
  switch (def.type) {
    case 'string': {
      const ok = (def.checks ?? []).some((c) => {
        const d = c._zod.def;
        return d.fn === safeSingleLine || d.fn === safeMultiLine || d.format === 'email' || d.format === 'regex';
      });
      if (def.format === 'datetime' || def.format === 'email') return []; // z.iso.datetime(), z.email(): the format is the schema itself
      return ok ? [] : [path];
    }
    case 'object':
      return kids(Object.entries(def.shape as Record<string, unknown>).map(([k, v]) => [v, `${path}.${k}`]));
    case 'optional': case 'nullable': case 'default': case 'prefault': case 'readonly': case 'catch': case 'nonoptional':
      return kids([[def.innerType, path]]);
    case 'pipe':
      return kids([[def.in, path], [def.out, path]]);
    case 'union':
      return kids((def.options as unknown[]).map((o, i) => [o, `${path}|${i}`]));
    case 'intersection':
      return kids([[def.left, path], [def.right, path]]);
    case 'array':
      return kids([[def.element, `${path}[]`]]);
    case 'tuple':
      return kids([...(def.items as unknown[]).map((o, i) => [o, `${path}[${i}]`] as [unknown, string]), [def.rest, `${path}[...]`]]);
    case 'record':
      return kids([[def.valueType, `${path}{}`]]); // keys are object keys, not stored text
    case 'lazy':
      return kids([[(def.getter as () => unknown)(), path]]);
    default:
      return [];
  }
}

describe('no bare z.string() in the shared schemas', () => {
  const modules = { auth, users, projects, sections, buildups, interpretation, account, notifications, review, register, editor: { buildupGeometrySchema } };

  it('the walker finds a bare string (so the sweep below can fail)', async () => {
    const { z } = await import('zod');
    expect(bareStrings(z.object({ a: z.object({ b: z.array(z.string().trim().optional()) }) }), 'x')).toEqual(['x.a.b[]']);
    expect(bareStrings(z.object({ a: safeText().trim() }), 'x')).toEqual([]);
    // An ISO 8601 date-time is a strict format: nothing but its own characters gets through.
    expect(bareStrings(z.object({ at: z.iso.datetime().nullable() }), 'x')).toEqual([]);
    expect(z.iso.datetime().safeParse('2026-12-05T09:00:00.000Z').success).toBe(true);
    for (const bad of ['2026-12-05T09:00:00.000Z\u0000', '2026-12-05T09:00:00.000Z\ud800', 'yesterday']) expect(z.iso.datetime().safeParse(bad).success).toBe(false);
  });

  for (const [mod, exports] of Object.entries(modules)) {
    it(`${mod}: every string schema is safe text or a strict format`, () => {
      const bare = Object.entries(exports).flatMap(([name, v]) => (defOf(v) ? bareStrings(v, `${mod}.${name}`) : []));
      expect(bare).toEqual([]);
    });
  }
});
