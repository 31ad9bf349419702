// SIGHUP reloads the rig config file. What can change while running: the notification filters (states, rules,
// durations, quiet period, tries) of the same sinks, and the retention quotas and floor. Anything else (source,
// channels and their calibration, analysis, bands, rules, data folder, server, masks, or a sink's destination)
// is refused with a message naming the keys, and the running config stays, as it does when the file has an error.
import { isDeepStrictEqual } from 'node:util';
import { loadRigConfig, type LoadedRigConfig, type RigConfig, type SinkConfig } from '../config/rig-config.ts';

export interface ReloadTargets {
  setNotifyFilters?(sinks: readonly SinkConfig[]): void;
  setRetention?(retention: NonNullable<RigConfig['retention']>): void;
}

const LIVE_KEYS = new Set(['notify', 'retention', '$schema']);
const FILTER_KEYS = ['states', 'rules', 'minDurationSeconds', 'quietSeconds', 'maxTries'];

function destination(s: SinkConfig): unknown {
  const rest: Record<string, unknown> = { ...s };
  for (const k of FILTER_KEYS) delete rest[k];
  return rest;
}

/** Applies `next` over `current` where it may change live; returns what happened, in words. */
export function applyReload(
  current: LoadedRigConfig,
  next: LoadedRigConfig,
  targets: ReloadTargets,
): { applied: boolean; message: string } {
  const keys = new Set([...Object.keys(current.config), ...Object.keys(next.config)]);
  const fixed = [...keys].filter(
    (k) =>
      !LIVE_KEYS.has(k) &&
      !isDeepStrictEqual((current.config as Record<string, unknown>)[k], (next.config as Record<string, unknown>)[k]),
  );
  const a = current.config.notify ?? [];
  const b = next.config.notify ?? [];
  if (a.length !== b.length || a.some((s, i) => !isDeepStrictEqual(destination(s), destination(b[i]))))
    fixed.push('notify (a sink added, removed or pointed elsewhere)');
  if ((current.config.retention === undefined) !== (next.config.retention === undefined))
    fixed.push('retention (turned on or off)');
  if (fixed.length)
    return {
      applied: false,
      message: `reload refused: ${fixed.join(', ')} cannot change while running; restart to apply. The running config stays.`,
    };
  const changed: string[] = [];
  if (!isDeepStrictEqual(a, b)) {
    targets.setNotifyFilters?.(b);
    changed.push('notification filters');
  }
  if (!isDeepStrictEqual(current.config.retention, next.config.retention)) {
    targets.setRetention?.(next.config.retention ?? {});
    changed.push('retention');
  }
  return {
    applied: true,
    message: changed.length
      ? `reloaded ${next.file}: ${changed.join(' and ')} updated`
      : `reloaded ${next.file}: nothing changed`,
  };
}

/** Installs the SIGHUP handler; returns the function that removes it. */
export function installReload(
  initial: LoadedRigConfig,
  targets: ReloadTargets,
  log: (line: string) => void,
): () => void {
  let current = initial;
  const onHup = () => {
    let next: LoadedRigConfig;
    try {
      next = loadRigConfig(current.file);
    } catch (err) {
      log(`reload refused: ${(err as Error).message} The running config stays.`);
      return;
    }
    const r = applyReload(current, next, targets);
    if (r.applied) current = next;
    log(r.message);
  };
  process.on('SIGHUP', onHup);
  return () => process.off('SIGHUP', onHup);
}
