// Runs once before any test worker starts (vitest globalSetup):
// - checks the python reference libraries, so a machine without them stops at once with one clear message
//   instead of many tests failing (or hanging) one by one;
// - builds dist/ once, so suites that run the CLI (bin/floorline.mjs) never rebuild it while other workers use it.
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('../..', import.meta.url));
// Oldest versions whose conventions the reference checks rely on (numpy 2 scalar/array API; scipy.signal.welch
// and scipy.stats as of 1.14).
const NEED = { numpy: [2, 0], scipy: [1, 14] } as const;
const FIX =
  'Install them with `bash scripts/ensure-system-packages.sh` (Debian: apt-get install python3-numpy python3-scipy) or pip.';

function atLeast(version: string, need: readonly [number, number]): boolean {
  const [major, minor] = version.split('.').map((p) => Number.parseInt(p, 10));
  return major > need[0] || (major === need[0] && minor >= need[1]);
}

export function checkPythonReferences(): void {
  const r = spawnSync('python3', ['-c', 'import numpy, scipy; print(numpy.__version__, scipy.__version__)'], {
    encoding: 'utf8',
  });
  if (r.status !== 0) {
    const why = r.error ? r.error.message : r.stderr.trim().split('\n').pop();
    throw new Error(
      `floorline tests: python3 with numpy ≥ 2 and scipy ≥ 1.14 is needed for the reference checks (${why}). ${FIX}`,
    );
  }
  const [numpy, scipy] = r.stdout.trim().split(/\s+/);
  const old = [
    atLeast(numpy, NEED.numpy) ? '' : `numpy ${numpy} (need ≥ ${NEED.numpy.join('.')})`,
    atLeast(scipy, NEED.scipy) ? '' : `scipy ${scipy} (need ≥ ${NEED.scipy.join('.')})`,
  ].filter(Boolean);
  if (old.length > 0) throw new Error(`floorline tests: python3 has ${old.join(' and ')}. ${FIX}`);
}

function buildOnce(): void {
  const r = spawnSync(process.execPath, ['scripts/build.mjs'], { cwd: root, encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`floorline tests: the build failed before the suite started:\n${r.stderr}`);
}

export default function setup(): void {
  checkPythonReferences();
  buildOnce();
}
