/**
 * The first step of `npm test` (tests/setup/ensure-env.ts) and the reference
 * library helper (tests/helpers/python-ref.ts), with an injected probe and a
 * runner that records the commands instead of running apt-get.
 */
import { describe, expect, it } from 'vitest';
import {
  REQUIREMENTS,
  ensureEnv,
  importableModules,
  installHint,
  missingPackages,
  systemProbe,
  type Probe,
  type Requirement,
} from '../../setup/ensure-env';
import { findPython, needReference, pythonReference, referencesRequired, runPython } from '../../helpers/python-ref';

const absent = (...pkgs: string[]): Probe => (r: Requirement) => !pkgs.includes(r.pkg);

function recorder(status = 0) {
  const calls: { cmd: string; args: string[]; env: Record<string, string> }[] = [];
  return { calls, run: (cmd: string, args: string[], env: Record<string, string>) => (calls.push({ cmd, args, env }), status) };
}

describe('ensure-env', () => {
  it('lists every package the suite needs', () => {
    expect(REQUIREMENTS.map((r) => r.pkg)).toEqual([
      'postgresql',
      'chromium',
      'poppler-utils',
      'python3',
      'python3-numpy',
      'python3-scipy',
      'python3-shapely',
      'python3-pyproj',
      'python3-segyio',
    ]);
  });

  it('does nothing when everything is present', () => {
    const rec = recorder();
    const r = ensureEnv({ probe: () => true, run: rec.run, isRoot: true, log: () => {} });
    expect(r).toEqual({ ok: true, installed: [] });
    expect(rec.calls).toEqual([]);
  });

  it('as root: apt-get update once, then one non-interactive install of exactly what is missing', () => {
    const rec = recorder();
    let installed = false;
    const r = ensureEnv({
      probe: absent('chromium', 'python3-pyproj', 'python3-segyio'),
      reprobe: () => ((installed = true), () => true),
      run: rec.run,
      isRoot: true,
      log: () => {},
    });
    expect(r).toEqual({ ok: true, installed: ['chromium', 'python3-pyproj', 'python3-segyio'] });
    expect(installed).toBe(true);
    expect(rec.calls.map((c) => [c.cmd, ...c.args].join(' '))).toEqual([
      'apt-get update',
      'apt-get install -y --no-install-recommends chromium python3-pyproj python3-segyio',
    ]);
    for (const c of rec.calls) expect(c.env.DEBIAN_FRONTEND).toBe('noninteractive');
  });

  it('not root: stops with one line naming what to install, runs nothing', () => {
    const rec = recorder();
    const r = ensureEnv({ probe: absent('postgresql', 'poppler-utils'), run: rec.run, isRoot: false, log: () => {} });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.missing).toEqual(['postgresql', 'poppler-utils']);
    expect(r.message).toContain('sudo apt-get install -y --no-install-recommends postgresql poppler-utils');
    expect(r.message).not.toContain('\n');
    expect(rec.calls).toEqual([]);
  });

  it('reports a failed apt-get and what is still missing after the install', () => {
    const failing = recorder(100);
    const r1 = ensureEnv({ probe: absent('chromium'), run: failing.run, isRoot: true, log: () => {} });
    expect(r1.ok).toBe(false);
    expect(failing.calls).toHaveLength(1); // update failed: no install attempted
    const ok = recorder();
    const r2 = ensureEnv({ probe: absent('python3', 'python3-numpy'), reprobe: () => absent('python3-numpy'), run: ok.run, isRoot: true, log: () => {} });
    expect(r2).toMatchObject({ ok: false, missing: ['python3-numpy'] });
  });

  it('a package behind several requirements is installed once', () => {
    const reqs: Requirement[] = [
      { pkg: 'python3-scipy', kind: 'python', module: 'scipy' },
      { pkg: 'python3-scipy', kind: 'python', module: 'scipy.signal' },
    ];
    expect(missingPackages(() => false, reqs)).toEqual(['python3-scipy']);
    expect(installHint(['a', 'b'])).toBe('sudo apt-get install -y --no-install-recommends a b');
  });

  it('the system probe tells present from missing on this machine', () => {
    const probe = systemProbe();
    expect(probe({ pkg: 'x', kind: 'file', path: '/nonexistent/cayline-tool' })).toBe(false);
    expect(probe({ pkg: 'x', kind: 'file', path: process.execPath })).toBe(true);
    expect(probe({ pkg: 'x', kind: 'glob', dir: '/nonexistent', sub: 'bin/initdb' })).toBe(false);
    // python's standard library imports; an invented module does not
    const mods = importableModules(['json', 'cayline_no_such_module']);
    expect(mods.has('cayline_no_such_module')).toBe(false);
    if (mods.size) expect(mods.has('json')).toBe(true);
  });
});

describe('python reference helper', () => {
  it('is required in CI and with CAYLINE_REQUIRE_REFERENCES=1 only', () => {
    expect(referencesRequired({ CI: 'true' })).toBe(true);
    expect(referencesRequired({ CAYLINE_REQUIRE_REFERENCES: '1' })).toBe(true);
    expect(referencesRequired({})).toBe(false);
    expect(referencesRequired({ CI: 'false' })).toBe(false);
  });

  it('a missing library fails the test when required and skips it (with the reason) otherwise', () => {
    const warnings: string[] = [];
    const required = pythonReference('cayline_no_such_module', { env: { CI: 'true' }, warn: (s) => warnings.push(s) });
    expect(required.python).toBeNull();
    expect(required.reason).toContain('sudo apt-get install python3-cayline_no_such_module');
    const skips: string[] = [];
    const ctx = { skip: (note?: string) => void skips.push(note ?? '') };
    expect(() => needReference(ctx, required)).toThrow(/required because CI=true/);
    expect(skips).toEqual([]);

    const optional = pythonReference('cayline_no_such_module', { env: {}, warn: (s) => warnings.push(s) });
    expect(() => needReference(ctx, optional)).toThrow(/skipped/);
    expect(skips).toHaveLength(1);
    expect(skips[0]).toContain('cayline_no_such_module');
    expect(warnings[0]).toMatch(/^MISSING \(required\)/);
    expect(warnings[1]).toMatch(/^SKIPPED/);
  });

  it('finds an interpreter that imports the standard library, and runs a script on JSON', (ctx) => {
    const found = findPython(['json']);
    if (!found.python) ctx.skip(`no python3 at all: ${found.reason}`);
    expect(runPython(found.python!, 'import json, sys; print(json.dumps(sum(json.load(sys.stdin))))', [1, 2, 3.5])).toBe(6.5);
    expect(() => runPython(found.python!, 'import sys; sys.exit(3)')).toThrow(/exit 3/);
  });
});
