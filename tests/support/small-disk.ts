// Small disks for full-disk tests: a tmpfs of a given size (needs root, as CI and this machine run). Mounts and the
// agent processes writing to them are registered, and releaseSmallDisks() — called from afterEach, which runs even
// when a test times out and its own `finally` never does — kills those processes and detaches the mounts lazily
// (umount -l works while a file on them is still open), so a failed test never leaves a mount behind.
import { spawnSync, type ChildProcess } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { expect } from 'vitest';

const mounts: string[] = [];
const children: ChildProcess[] = [];

/** Mounts a tmpfs of `size` (e.g. '96k', '16m') at `path` (created). */
export function mountSmallDisk(path: string, size: string): string {
  mkdirSync(path, { recursive: true });
  const r = spawnSync('mount', ['-t', 'tmpfs', '-o', `size=${size}`, 'tmpfs', path], { encoding: 'utf8' });
  expect(r.status, `mount tmpfs: ${r.stderr}`).toBe(0);
  mounts.push(path);
  return path;
}

/** Registers a process that writes to a small disk, to be killed if the test ends before it does. */
export function ownProcess<T extends ChildProcess>(child: T): T {
  children.push(child);
  return child;
}

export function releaseSmallDisks(): void {
  for (const c of children.splice(0)) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
  for (const m of mounts.splice(0).reverse()) spawnSync('umount', ['-l', m]);
}
