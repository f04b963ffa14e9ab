/** The command line entry (measurement-spec §9): JSON on stdout and exit 0; errors on stderr and exit 1. */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { FIXTURES } from './helpers';

const tsx = join(process.cwd(), 'node_modules', '.bin', 'tsx');
const runCli = (file: string) => spawnSync(tsx, ['server/scripts/measure.ts', file], { encoding: 'utf8', cwd: process.cwd() });

describe('npm run measure', () => {
  it('prints the output JSON and exits 0, honouring top-level options', () => {
    const r = runCli(join(FIXTURES, 'in', 'kestrel-knoll-twt-buildup-ranges.json'));
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.format).toBe('cayline.measurements/1');
    expect(out.options.draws).toBe(300);
    expect(out.options.seed).toBe('TB-11');
    expect(out.buildups[0].ranges.draws).toBe(300);
  }, 30_000);

  it('accepts the API body shape { interpretation, options }', () => {
    const dir = mkdtempSync(join(tmpdir(), 'cayline-measure-'));
    const doc = JSON.parse(readFileSync(join(FIXTURES, 'in', 'bank-depth.json'), 'utf8'));
    const f = join(dir, 'body.json');
    writeFileSync(f, JSON.stringify({ interpretation: doc, options: { aggradingToleranceDeg: 5 } }));
    const r = runCli(f);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).options.aggradingToleranceDeg).toBe(5);
  }, 30_000);

  it('bad input: message with the field path on stderr, exit 1, nothing on stdout', () => {
    const r = runCli(join(FIXTURES, 'in', 'refused-margin-outside-top.json'));
    expect(r.status).toBe(1);
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(/buildups\[0\]\.cycles\[1\]\.marginLeft: outside the top's x-range/);
  }, 30_000);

  it('unreadable or non-JSON files exit 1', () => {
    const dir = mkdtempSync(join(tmpdir(), 'cayline-measure-'));
    const f = join(dir, 'broken.json');
    writeFileSync(f, '{ not json');
    const r = runCli(f);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/not valid JSON/);
    expect(runCli(join(dir, 'missing.json')).status).toBe(1);
  }, 30_000);
});
