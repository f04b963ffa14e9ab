/**
 * Writes the demo sections for inspection:
 *   npx tsx server/scripts/synth.ts OUTDIR [--fixtures]
 * OUTDIR receives <key>.png and <key>.json (the true geometry). With --fixtures the geometry
 * JSON is also written to tests/fixtures/synthetic/.
 */
import { mkdir, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { DEMO_SECTIONS, fixtureOf, generateSection } from '../synth/demo';

/** Indented JSON with every array of numbers (points) on one line. */
export function formatJson(value: unknown): string {
  return (
    JSON.stringify(value, null, 1).replace(/\[\s*(-?[\d.eE+-]+(?:,\s*-?[\d.eE+-]+)*)\s*\]/g, (_m, body: string) =>
      `[${body.split(/,\s*/).join(', ')}]`,
    ) + '\n'
  );
}

async function main(argv: string[]): Promise<void> {
  const args = argv.filter((a) => !a.startsWith('--'));
  const writeFixtures = argv.includes('--fixtures');
  const outDir = args[0];
  if (!outDir) {
    process.stderr.write('usage: npx tsx server/scripts/synth.ts OUTDIR [--fixtures]\n');
    process.exit(1);
  }
  await mkdir(outDir, { recursive: true });
  const here = path.dirname(fileURLToPath(import.meta.url));
  const fixtureDir = path.resolve(here, '../../tests/fixtures/synthetic');
  if (writeFixtures) await mkdir(fixtureDir, { recursive: true });
  for (const def of DEMO_SECTIONS) {
    const t = performance.now();
    const s = await generateSection(def);
    const ms = performance.now() - t;
    const json = formatJson(fixtureOf(def, s));
    await writeFile(path.join(outDir, `${def.key}.png`), s.png);
    await writeFile(path.join(outDir, `${def.key}.json`), json);
    if (writeFixtures) await writeFile(path.join(fixtureDir, `${def.key}.json`), json);
    const b = s.interpretation.buildups[0];
    process.stdout.write(
      `${def.lineName} ${b.name}: ${s.width}×${s.height} px, ${(s.png.length / 1e6).toFixed(1)} MB PNG, ` +
        `${b.cycles.length} cycles, ${b.terminations.length} terminations, ${(ms / 1000).toFixed(2)} s\n`,
    );
  }
}

main(process.argv.slice(2)).catch((e: unknown) => {
  process.stderr.write(`${e instanceof Error ? e.message : String(e)}\n`);
  process.exit(1);
});
