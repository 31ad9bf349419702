// Finds the file that continues a rotated recording: recordings are named PREFIX-YYYYMMDDTHHMMSSZ-sFIRST.wav
// (agent/recorder/file-naming.ts) and their sidecars carry the first sample index, so the next file of a run is
// the one with the same prefix whose first sample is the smallest at or after the sample we need next.
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { sidecarPath } from '../wav/metadata.ts';

const NAME = /^(.*)-\d{8}T\d{6}Z-s(\d+)\.wav$/;

/** The prefix of a recording's file name, or undefined if it is not named as our recorder names files. */
export function runPrefix(path: string): string | undefined {
  return NAME.exec(basename(path))?.[1];
}

/** The next file of the run after `path`, as { path, firstSample }, or undefined when there is none. */
export function nextFileOfRun(path: string, nextSample: number): { path: string; firstSample: number } | undefined {
  const prefix = runPrefix(path);
  if (prefix === undefined) return undefined;
  const dir = dirname(path);
  let best: { path: string; firstSample: number } | undefined;
  for (const name of readdirSync(dir)) {
    const m = NAME.exec(name);
    if (!m || m[1] !== prefix) continue;
    const candidate = join(dir, name);
    if (!existsSync(sidecarPath(candidate))) continue;
    let first: number;
    try {
      first = JSON.parse(readFileSync(sidecarPath(candidate), 'utf8')).firstSample;
    } catch {
      continue; // a damaged sidecar: not part of a run we can follow
    }
    if (!Number.isSafeInteger(first) || first < nextSample) continue;
    if (!best || first < best.firstSample) best = { path: candidate, firstSample: first };
  }
  return best;
}
