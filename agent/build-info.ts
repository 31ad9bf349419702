// The floorline version and the git commit the bundle was built from. scripts/build.mjs defines
// FLOORLINE_COMMIT from `git rev-parse HEAD` (with "-dirty" when the tree had changes); a run from sources or a
// build outside a git checkout says "unknown".
declare const FLOORLINE_COMMIT: string | undefined;

export const FLOORLINE_VERSION = '0.1.0';
export const BUILD_COMMIT: string = typeof FLOORLINE_COMMIT === 'string' ? FLOORLINE_COMMIT : 'unknown';
