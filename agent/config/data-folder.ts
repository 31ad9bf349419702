// The data folder (--data DIR, default ./floorline-data): recordings/, baselines/ and events.jsonl.
// Every file a client or the user names for the agent to write or serve is resolved inside it.
import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { resolveInside } from './safe-path.ts';
import { FloorlineError } from '../errors.ts';

export const DEFAULT_DATA_FOLDER = './floorline-data';

export interface DataFolder {
  root: string;
  recordings: string;
  baselines: string;
  events: string;
  /** Absolute path of `name` inside the folder; throws PathOutsideError for escapes. */
  resolve(name: string, what?: string): string;
}

/** Describes the layout under `dir` without touching the disk. */
export function dataFolderAt(dir: string = DEFAULT_DATA_FOLDER): DataFolder {
  const root = resolve(dir);
  return {
    root,
    recordings: join(root, 'recordings'),
    baselines: join(root, 'baselines'),
    events: join(root, 'events.jsonl'),
    resolve: (name: string, what?: string) => resolveInside(root, name, what),
  };
}

/** Creates the folder and its subfolders if missing. Errors name the folder and the fix. */
export function ensureDataFolder(folder: DataFolder): DataFolder {
  for (const d of [folder.root, folder.recordings, folder.baselines]) {
    try {
      mkdirSync(d, { recursive: true });
    } catch (err) {
      const e = err as NodeJS.ErrnoException;
      throw new FloorlineError(
        'DATA_FOLDER',
        `cannot create data folder ${d} (${e.code ?? e.message}); pick a writable place with --data DIR`,
      );
    }
  }
  return folder;
}
