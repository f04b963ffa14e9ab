/**
 * First step of `npm test`: make sure the machine has the Debian packages the
 * suite needs, and install the missing ones when running as root.
 *
 *   postgresql        server binaries for the throwaway test cluster (initdb)
 *   chromium          the browser the end-to-end tests drive
 *   poppler-utils     pdftoppm, to look at exported PDFs
 *   python3 + python3-numpy, -scipy, -shapely, -pyproj, -segyio
 *                     the outside reference libraries of the cross-checks
 *
 * As root: one `apt-get update`, then one `apt-get install -y
 * --no-install-recommends …` (DEBIAN_FRONTEND=noninteractive). Not root and
 * something missing: stop with one line saying what to install. Everything
 * present: a quick no-op (one python3 process probes all modules at once).
 *
 * Run: `tsx tests/setup/ensure-env.ts`. The logic is `ensureEnv()`, with the
 * probe and the command runner injectable for tests.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const PYTHON = '/usr/bin/python3';

export type Requirement =
  | { pkg: string; kind: 'file'; path: string }
  | { pkg: string; kind: 'glob'; dir: string; sub: string }
  | { pkg: string; kind: 'python'; module: string };

/** What the suite needs, in install order. */
export const REQUIREMENTS: readonly Requirement[] = [
  { pkg: 'postgresql', kind: 'glob', dir: '/usr/lib/postgresql', sub: 'bin/initdb' },
  { pkg: 'chromium', kind: 'file', path: '/usr/bin/chromium' },
  { pkg: 'poppler-utils', kind: 'file', path: '/usr/bin/pdftoppm' },
  { pkg: 'python3', kind: 'file', path: PYTHON },
  { pkg: 'python3-numpy', kind: 'python', module: 'numpy' },
  { pkg: 'python3-scipy', kind: 'python', module: 'scipy' },
  { pkg: 'python3-shapely', kind: 'python', module: 'shapely' },
  { pkg: 'python3-pyproj', kind: 'python', module: 'pyproj' },
  { pkg: 'python3-segyio', kind: 'python', module: 'segyio' },
];

/** Is this requirement met on the machine? */
export type Probe = (req: Requirement) => boolean;

/** Runs a command (no shell); returns its exit status. */
export type Runner = (cmd: string, args: string[], env: Record<string, string>) => number;

/** Python modules importable by `python`, probed in one process (each import tried separately). */
export function importableModules(modules: readonly string[], python = PYTHON): Set<string> {
  if (!modules.length || !fs.existsSync(python)) return new Set();
  const script = [
    'import importlib, json, sys',
    'ok = []',
    'for m in json.loads(sys.argv[1]):',
    '    try:',
    '        importlib.import_module(m); ok.append(m)',
    '    except Exception:',
    '        pass',
    'print(json.dumps(ok))',
  ].join('\n');
  const r = spawnSync(python, ['-c', script, JSON.stringify(modules)], { encoding: 'utf8' });
  if (r.status !== 0) return new Set();
  try {
    return new Set(JSON.parse(r.stdout.trim().split('\n').pop() ?? '[]') as string[]);
  } catch {
    return new Set();
  }
}

/** The real machine: files, a glob one folder deep, and python imports (one process for all modules). */
export function systemProbe(): Probe {
  let importable: Set<string> | null = null;
  return (req) => {
    switch (req.kind) {
      case 'file':
        try {
          fs.accessSync(req.path, fs.constants.X_OK);
          return true;
        } catch {
          return false;
        }
      case 'glob':
        try {
          return fs.readdirSync(req.dir).some((d) => fs.existsSync(path.join(req.dir, d, req.sub)));
        } catch {
          return false;
        }
      case 'python':
        importable ??= importableModules(REQUIREMENTS.flatMap((r) => (r.kind === 'python' ? [r.module] : [])));
        return importable.has(req.module);
    }
  };
}

export const systemRunner: Runner = (cmd, args, env) => {
  const r = spawnSync(cmd, args, { stdio: 'inherit', env: { ...process.env, ...env } });
  return r.status ?? 1;
};

/** Debian packages whose requirement is not met, each once, in install order. */
export function missingPackages(probe: Probe, reqs: readonly Requirement[] = REQUIREMENTS): string[] {
  const out: string[] = [];
  for (const r of reqs) if (!probe(r) && !out.includes(r.pkg)) out.push(r.pkg);
  return out;
}

export interface EnsureOptions {
  probe?: Probe;
  /** Re-probe after installing (a fresh probe: the system one caches python imports). */
  reprobe?: () => Probe;
  run?: Runner;
  isRoot?: boolean;
  log?: (line: string) => void;
}

export type EnsureResult =
  | { ok: true; installed: string[] }
  | { ok: false; missing: string[]; message: string };

export const installHint = (pkgs: readonly string[]) => `sudo apt-get install -y --no-install-recommends ${pkgs.join(' ')}`;

/** Check the machine; as root install what is missing. Never throws for a missing package: the result says what is wrong. */
export function ensureEnv(opts: EnsureOptions = {}): EnsureResult {
  const probe = opts.probe ?? systemProbe();
  const run = opts.run ?? systemRunner;
  const log = opts.log ?? ((l: string) => console.log(l));
  const isRoot = opts.isRoot ?? process.getuid?.() === 0;
  const missing = missingPackages(probe);
  if (!missing.length) return { ok: true, installed: [] };
  if (!isRoot)
    return { ok: false, missing, message: `[setup] missing Debian packages: ${missing.join(', ')}; install them with: ${installHint(missing)}` };
  log(`[setup] installing Debian packages: ${missing.join(' ')}`);
  const env = { DEBIAN_FRONTEND: 'noninteractive' };
  if (run('apt-get', ['update'], env) !== 0)
    return { ok: false, missing, message: `[setup] apt-get update failed; install by hand: ${installHint(missing)}` };
  if (run('apt-get', ['install', '-y', '--no-install-recommends', ...missing], env) !== 0)
    return { ok: false, missing, message: `[setup] apt-get install failed for: ${missing.join(' ')}` };
  const still = missingPackages(opts.reprobe ? opts.reprobe() : opts.probe ?? systemProbe());
  if (still.length) return { ok: false, missing: still, message: `[setup] still missing after apt-get install: ${still.join(', ')}` };
  return { ok: true, installed: missing };
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const r = ensureEnv();
  if (!r.ok) {
    console.error(r.message);
    process.exit(1);
  }
}
