/**
 * Fixture loop: every tests/fixtures/measure/in/*.json is measured (with the
 * file's top-level `options`, if any) and compared with out/<same name>
 * (numbers within 1e-9 relative + 1e-6 absolute). A refused input is stored
 * as `{ "error": { "path", "message" } }`. Regenerate the outputs with
 * `UPDATE_FIXTURES=1 npx vitest run --project unit tests/unit/measure/fixtures.test.ts`
 * and review the diff before committing.
 */
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { measure, MeasureInputError } from '../../../shared/measure';
import { FIXTURES, firstDifference } from './helpers';

const update = process.env.UPDATE_FIXTURES === '1';
const inputs = readdirSync(join(FIXTURES, 'in')).filter((f) => f.endsWith('.json')).sort();

function run(doc: { options?: unknown }): unknown {
  try {
    return measure(doc, doc.options);
  } catch (e) {
    if (e instanceof MeasureInputError) return { error: { path: e.path, message: e.message } };
    throw e;
  }
}

describe('measurement fixtures', () => {
  it('has the synthetic buildups as fixtures', () => {
    for (const f of ['pinnacle-depth.json', 'bank-depth.json', 'platform-depth.json', 'drowned-terminations-depth.json', 'drowned-flag-depth.json'])
      expect(inputs).toContain(f);
  });

  for (const file of inputs) {
    it(file, () => {
      const doc = JSON.parse(readFileSync(join(FIXTURES, 'in', file), 'utf8'));
      const got = JSON.parse(JSON.stringify(run(doc)));
      const outPath = join(FIXTURES, 'out', file);
      if (update) writeFileSync(outPath, `${JSON.stringify(got, null, 2)}\n`);
      expect(existsSync(outPath), `missing ${outPath}: run with UPDATE_FIXTURES=1`).toBe(true);
      const want = JSON.parse(readFileSync(outPath, 'utf8'));
      expect(firstDifference(got, want)).toBeNull();
    });
  }
});
