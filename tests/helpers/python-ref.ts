/**
 * Outside reference libraries for cross-checks (references.md, "Reference
 * libraries for cross-checks"): which python3 can import a module, and what a
 * test does when none can.
 *
 * - In CI (`CI=true`) or with `CAYLINE_REQUIRE_REFERENCES=1`, a missing
 *   library fails the test that needs it (never a silent skip).
 * - Elsewhere the test is skipped through vitest (reported as skipped, never
 *   as passed) and the reason is printed once.
 *
 * Use: `const np = pythonReference('numpy');` at module level, then inside a
 * test `const py = needReference(ctx, np);` (ctx = the test context) and
 * `runPython(py, script, input)`. `npm test` installs the Debian packages
 * first (tests/setup/ensure-env.ts), so on a prepared machine nothing skips.
 */
import { spawnSync } from 'node:child_process';

/** Interpreters tried in order: Debian's own first. */
export const PYTHON_CANDIDATES = ['/usr/bin/python3', 'python3'] as const;

/** Debian package that provides a python module (for the hint in messages). */
const DEBIAN_PACKAGE: Record<string, string> = {
  numpy: 'python3-numpy',
  scipy: 'python3-scipy',
  'scipy.signal': 'python3-scipy',
  shapely: 'python3-shapely',
  pyproj: 'python3-pyproj',
  segyio: 'python3-segyio',
};

export const debianPackageOf = (module: string) => DEBIAN_PACKAGE[module] ?? `python3-${module.split('.')[0]}`;

/** True when missing reference libraries must fail the run (CI=true or CAYLINE_REQUIRE_REFERENCES=1). */
export function referencesRequired(env: Record<string, string | undefined> = process.env): boolean {
  return env.CI === 'true' || env.CAYLINE_REQUIRE_REFERENCES === '1';
}

export interface PythonReference {
  /** The modules asked for (all must import). */
  modules: string[];
  /** Interpreter that imports all of them, or null. */
  python: string | null;
  /** Why none does (null when one does). */
  reason: string | null;
  /** Whether a missing library fails the test (see referencesRequired). */
  required: boolean;
}

const cache = new Map<string, { python: string | null; reason: string | null }>();

/** The first interpreter of `candidates` that imports every module, with the reason when none does. */
export function findPython(modules: readonly string[], candidates: readonly string[] = PYTHON_CANDIDATES): { python: string | null; reason: string | null } {
  const key = `${modules.join(',')}|${candidates.join(',')}`;
  const hit = cache.get(key);
  if (hit) return hit;
  const why: string[] = [];
  let found: { python: string | null; reason: string | null } | null = null;
  for (const exe of candidates) {
    const r = spawnSync(exe, ['-c', modules.map((m) => `import ${m}`).join('; ')], { encoding: 'utf8' });
    if (r.status === 0) {
      found = { python: exe, reason: null };
      break;
    }
    const last = r.error ? r.error.message : (r.stderr.trim().split('\n').pop() ?? `exit ${r.status}`);
    why.push(`${exe}: ${last}`);
  }
  const pkgs = [...new Set(modules.map(debianPackageOf))];
  found ??= {
    python: null,
    reason: `no python3 can import ${modules.join(', ')} (${why.join('; ')}); install with: sudo apt-get install ${pkgs.join(' ')}`,
  };
  cache.set(key, found);
  return found;
}

/** Look up the reference library once per test file; prints why when it is missing. */
export function pythonReference(
  modules: string | readonly string[],
  opts: { env?: Record<string, string | undefined>; candidates?: readonly string[]; warn?: (s: string) => void } = {},
): PythonReference {
  const list = typeof modules === 'string' ? [modules] : [...modules];
  const { python, reason } = findPython(list, opts.candidates);
  const required = referencesRequired(opts.env);
  if (reason) (opts.warn ?? console.warn)(`${required ? 'MISSING (required)' : 'SKIPPED'} cross-check with ${list.join(', ')}: ${reason}`);
  return { modules: list, python, reason, required };
}

/** The part of vitest's test context used here. */
export interface SkipContext {
  skip: (note?: string) => void;
}

/**
 * Inside a test: the interpreter to use. When the library is missing, fails
 * the test (required mode) or skips it through vitest with the reason.
 */
export function needReference(ctx: SkipContext, ref: PythonReference): string {
  if (ref.python) return ref.python;
  const msg = `reference library ${ref.modules.join(', ')} missing: ${ref.reason}`;
  if (ref.required) throw new Error(`${msg} (required because CI=true or CAYLINE_REQUIRE_REFERENCES=1)`);
  ctx.skip(msg);
  // ctx.skip throws inside vitest; a context that does not must still stop the test
  throw new Error(`skipped: ${msg}`);
}

/** Run a python script with JSON on stdin; parses its last stdout line as JSON. Throws with python's stderr on failure. */
export function runPython(python: string, script: string, input: unknown = null): unknown {
  const r = spawnSync(python, ['-c', script], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (r.error) throw r.error;
  if (r.status !== 0) throw new Error(`${python} failed (exit ${r.status}): ${r.stderr.trim()}`);
  return JSON.parse(r.stdout.trim().split('\n').pop() ?? 'null');
}
