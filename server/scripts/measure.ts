/**
 * Command line: `npm run measure -- path/to/interpretation.json`
 *
 * Prints the measurement output (measurement-spec §7) as JSON on stdout and
 * exits 0; on bad input prints the error (with the field path) on stderr and
 * exits 1. The file may hold the interpretation itself with an optional
 * top-level `options` object, or `{ "interpretation": {...}, "options": {...} }`
 * like the API request body.
 */
import { readFile } from 'node:fs/promises';
import { measure, MeasureInputError } from '../../shared/measure';

async function main(argv: string[]): Promise<number> {
  const file = argv.find((a) => a !== '--');
  if (!file) {
    process.stderr.write('usage: npm run measure -- path/to/interpretation.json\n');
    return 1;
  }
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    process.stderr.write(`cannot read ${file}: ${(e as Error).message}\n`);
    return 1;
  }
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    process.stderr.write(`${file}: not valid JSON: ${(e as Error).message}\n`);
    return 1;
  }
  if (!doc || typeof doc !== 'object' || Array.isArray(doc)) {
    process.stderr.write(`${file}: expected a JSON object (an interpretation)\n`);
    return 1;
  }
  const obj = doc as Record<string, unknown>;
  const wrapped = obj.interpretation !== undefined && obj.buildups === undefined;
  const interpretation = wrapped ? obj.interpretation : obj;
  const options = obj.options;
  try {
    const out = measure(interpretation, options);
    process.stdout.write(`${JSON.stringify(out, null, 2)}\n`);
    return 0;
  } catch (e) {
    if (e instanceof MeasureInputError) {
      process.stderr.write(`${file}: ${e.message}\n`);
      for (const extra of e.issues.slice(1)) process.stderr.write(`  also: ${extra}\n`);
      return 1;
    }
    throw e;
  }
}

main(process.argv.slice(2)).then(
  (code) => process.exit(code),
  (e) => {
    process.stderr.write(`measure failed: ${(e as Error).stack ?? String(e)}\n`);
    process.exit(2);
  },
);
