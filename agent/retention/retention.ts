// Disk retention for the data folder's recordings/: continuous recordings (rec-…) and event captures
// (capture-…) are kept within their own quotas (maxBytes, maxAgeDays), oldest whole files first, each deletion an
// info event naming the file. Below the free-space floor continuous recording pauses, with a `disk` alarm raised,
// and resumes (alarm cleared) once there is room again; analysis, alarms, captures and the store go on.
// The continuous file being written, and a capture written in the last seconds, are never deleted. A sweep runs
// every couple of seconds and whenever the recorder starts a new continuous file.
import { readdirSync, rmSync, statSync, statfsSync } from 'node:fs';
import { join } from 'node:path';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { DiskState } from '../../protocol/messages.ts';
import type { Quota } from '../config/rig-config.ts';

export interface RetentionPolicy {
  recordings?: Quota;
  captures?: Quota;
  minFreeBytes?: number;
}

/** What /api/status and /metrics show (see DiskState). */
export type DiskStatus = DiskState;

export interface RetentionHooks {
  /** Emits an event (info for deletions, alarm `disk` for the floor). */
  emit(e: Omit<FloorlineEvent, 'sample' | 't' | 'wallTime'>): void;
  /** Pauses / resumes continuous recording (only if the user asked for it). */
  pauseRecording(): void;
  resumeRecording(): void;
  /** Data-folder-relative names of files open for writing right now. */
  openFiles(): string[];
}

interface FileInfo {
  name: string;
  bytes: number;
  mtimeMs: number;
}

/** A capture written to this recently may still be open (the recorder flushes twice a second): leave it alone. */
const CAPTURE_SETTLE_MS = 2000;

export class RetentionKeeper {
  private paused = false;
  private deleted = 0;
  private last: DiskStatus;
  private timer: NodeJS.Timeout | undefined;

  constructor(
    private readonly recordingsDir: string,
    private policy: RetentionPolicy,
    private readonly hooks: RetentionHooks,
  ) {
    this.last = {
      usedBytes: 0,
      recordingsBytes: 0,
      capturesBytes: 0,
      freeBytes: 0,
      minFreeBytes: policy.minFreeBytes ?? 0,
      historyDays: 0,
      paused: false,
      deletedFiles: 0,
    };
  }

  /**
   * Sweeps now and then every intervalMs (wall clock: disk space is not a property of the signal). `run` wraps each
   * sweep (the monitor passes its part boundary, so a throwing sweep is reported, not an uncaught exception).
   */
  start(intervalMs = 2000, run: (sweep: () => void) => void = (sweep) => sweep()): void {
    const sweep = (): void => void this.sweep();
    run(sweep);
    this.timer = setInterval(() => run(sweep), intervalMs);
    this.timer.unref();
  }

  stop(): void {
    if (this.timer) clearInterval(this.timer);
  }

  /** New quotas and floor (a reload); they apply from the next sweep. */
  setPolicy(policy: RetentionPolicy): void {
    this.policy = policy;
  }

  status(): DiskStatus {
    return { ...this.last };
  }

  /** One pass: quotas, then the free-space floor. */
  sweep(now = Date.now()): DiskStatus {
    const files = this.list();
    const open = new Set(this.hooks.openFiles().map((f) => f.replace(/^recordings\//, '')));
    const rec = this.enforce(
      files.filter((f) => f.name.startsWith('rec-')),
      this.policy.recordings,
      open,
      now,
      0,
    );
    const cap = this.enforce(
      files.filter((f) => f.name.startsWith('capture-')),
      this.policy.captures,
      open,
      now,
      CAPTURE_SETTLE_MS,
    );
    const free = this.freeBytes();
    const floor = this.policy.minFreeBytes ?? 0;
    if (floor > 0) {
      // Resume only with some room above the floor, so one file's worth of writing does not flap the alarm.
      const resumeAt = floor + Math.max(1 << 20, floor * 0.1);
      if (!this.paused && free < floor) {
        this.paused = true;
        this.hooks.pauseRecording();
        this.hooks.emit({
          kind: 'alarm',
          rule: 'disk',
          state: 'raised',
          channel: '*',
          detail: `free space ${mib(free)} below the floor of ${mib(floor)}: continuous recording paused (analysis, alarms and captures go on)`,
        });
      } else if (this.paused && free >= resumeAt) {
        this.paused = false;
        this.hooks.resumeRecording();
        this.hooks.emit({
          kind: 'alarm',
          rule: 'disk',
          state: 'cleared',
          channel: '*',
          detail: `free space ${mib(free)} back above ${mib(resumeAt)}: continuous recording resumed`,
        });
      }
    }
    const oldest = Math.min(...[...rec.kept, ...cap.kept].map((f) => f.mtimeMs), now);
    this.last = {
      usedBytes: rec.bytes + cap.bytes,
      recordingsBytes: rec.bytes,
      capturesBytes: cap.bytes,
      freeBytes: free,
      minFreeBytes: floor,
      historyDays: (now - oldest) / 86_400_000,
      paused: this.paused,
      deletedFiles: this.deleted,
    };
    return this.status();
  }

  /** WAVs with their sidecars counted in, oldest first (names carry the start time, mtime breaks ties). */
  private list(): FileInfo[] {
    let names: string[];
    try {
      names = readdirSync(this.recordingsDir);
    } catch {
      return [];
    }
    const out: FileInfo[] = [];
    for (const name of names) {
      if (!name.endsWith('.wav')) continue;
      try {
        const st = statSync(join(this.recordingsDir, name));
        let bytes = st.size;
        try {
          bytes += statSync(join(this.recordingsDir, `${name}.json`)).size;
        } catch {
          /* no sidecar */
        }
        out.push({ name, bytes, mtimeMs: st.mtimeMs });
      } catch {
        /* vanished meanwhile */
      }
    }
    return out.sort((a, b) => a.mtimeMs - b.mtimeMs || a.name.localeCompare(b.name));
  }

  private enforce(
    files: FileInfo[],
    quota: Quota | undefined,
    open: Set<string>,
    now: number,
    settleMs: number,
  ): { bytes: number; kept: FileInfo[] } {
    let bytes = files.reduce((a, f) => a + f.bytes, 0);
    const kept: FileInfo[] = [];
    const maxAgeMs = quota?.maxAgeDays !== undefined ? quota.maxAgeDays * 86_400_000 : Infinity;
    const maxBytes = quota?.maxBytes ?? Infinity;
    for (const f of files) {
      const deletable = !open.has(f.name) && now - f.mtimeMs > settleMs;
      const tooOld = now - f.mtimeMs > maxAgeMs;
      if (deletable && (bytes > maxBytes || tooOld)) {
        try {
          rmSync(join(this.recordingsDir, f.name), { force: true });
          rmSync(join(this.recordingsDir, `${f.name}.json`), { force: true });
          bytes -= f.bytes;
          this.deleted++;
          this.hooks.emit({
            kind: 'info',
            rule: 'retention',
            state: 'raised',
            channel: '*',
            detail: `deleted recordings/${f.name} (${mib(f.bytes)}, ${tooOld ? `older than ${quota!.maxAgeDays} days` : `over the ${mib(maxBytes)} quota`})`,
          });
          continue;
        } catch {
          /* keep counting it */
        }
      }
      kept.push(f);
    }
    return { bytes, kept };
  }

  private freeBytes(): number {
    try {
      const s = statfsSync(this.recordingsDir);
      return s.bavail * s.bsize;
    } catch {
      return Infinity;
    }
  }
}

function mib(bytes: number): string {
  return `${(bytes / 1048576).toFixed(bytes < 10 * 1048576 ? 2 : 0)} MiB`;
}
