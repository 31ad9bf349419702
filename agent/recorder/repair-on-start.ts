// On start, recordings left by a crash (header sizes never patched, a half-written last frame) are made whole:
// every WAV in recordings/ that has our sidecar goes through repairWav, which changes only files that need it.
import { existsSync, readdirSync } from 'node:fs';
import { join, relative } from 'node:path';
import type { DataFolder } from '../config/data-folder.ts';
import { repairWav } from '../wav/repair.ts';
import { sidecarPath } from '../wav/metadata.ts';

export interface RepairReport {
  repaired: { file: string; frames: number; droppedBytes: number }[];
  failed: { file: string; error: string }[];
}

export async function repairRecordings(folder: DataFolder): Promise<RepairReport> {
  const report: RepairReport = { repaired: [], failed: [] };
  if (!existsSync(folder.recordings)) return report;
  for (const name of readdirSync(folder.recordings).sort()) {
    if (!name.endsWith('.wav')) continue;
    const path = join(folder.recordings, name);
    if (!existsSync(sidecarPath(path))) continue; // not one of ours: leave it alone
    const file = relative(folder.root, path);
    try {
      const r = await repairWav(path);
      if (r.changed) report.repaired.push({ file, frames: r.frames, droppedBytes: r.droppedBytes });
    } catch (err) {
      const e = err as Error & { code?: string };
      if (e.code === 'WAV_MISUSE') continue; // a complete file (a chunk follows its data): nothing to repair
      report.failed.push({ file, error: e.message });
    }
  }
  return report;
}
