// One report from a store and a span: collect the rows, compute the figures, render the HTML. Shared by
// `floorline report` and the dashboard's GET /api/report (which runs it on a worker thread).
import { dirname, join, resolve } from 'node:path';
import { openStoreForReading } from '../store/open-store.ts';
import type { TimeBound } from '../store/time-bound.ts';
import { BUILD_COMMIT, FLOORLINE_VERSION } from '../build-info.ts';
import { createProgress } from '../cli/progress.ts';
import { collectReport, type ReportData } from './collect.ts';
import { computeFigures, type RigConfigRef } from './figures.ts';
import { writeReport } from './render.ts';

export interface BuildOptions {
  maskPath?: string;
  /** The rig config given to the report (`--config`), already validated, with its SHA-256. */
  rig?: RigConfigRef;
  /** The href of a capture, given its path on disk. */
  link: (file: string, capture: string) => string;
  generatedAt: string;
  /** A progress bar on stderr when it is a terminal. */
  progress?: boolean;
}

/** Writes the report's HTML in parts to `write` (joined by newlines); says whether a band failed the mask. */
export async function buildReport(
  storePath: string,
  span: { from?: TimeBound; to?: TimeBound },
  o: BuildOptions,
  write: (part: string) => void,
): Promise<{ maskFailed: boolean }> {
  // On a terminal: one step for reading the store, then one per incident spectrum (each reads its capture).
  const bar = o.progress ? createProgress('report') : undefined;
  bar?.update(0, 1);
  const db = openStoreForReading(storePath);
  let data: ReportData;
  try {
    data = collectReport(db, span.from, span.to);
  } finally {
    db.close();
  }
  const figures = await computeFigures(data, {
    maskPath: o.maskPath,
    rig: o.rig,
    onIncident: (done, total) => bar?.update(1 + done, 1 + total),
  });
  bar?.finish();
  // Captures lie in the data folder the run recorded (else, for a store without that record, the store's folder).
  const dataDir = figures.context?.dataDir ?? dirname(resolve(storePath));
  writeReport(
    data,
    figures,
    {
      generatedAt: o.generatedAt,
      version: FLOORLINE_VERSION,
      commit: BUILD_COMMIT,
      link: (capture) => o.link(join(dataDir, capture), capture),
    },
    write,
  );
  const maskFailed = [...figures.maskVerdicts.values()].some((v) => typeof v === 'object' && !v.pass);
  return { maskFailed };
}
