// Disk accounting and the history store's commit health in /metrics: the figures render as OpenMetrics families that the format authors'
// parser (prometheus_client.openmetrics.parser) reads with the declared types, units and values.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { startWithFake, type Started } from './support/start.ts';
import { renderMetrics } from '../../agent/server/metrics.ts';
import type { AgentStatus } from '../../protocol/messages.ts';

let s: Started;
let status: AgentStatus;
beforeAll(async () => {
  s = await startWithFake();
  s.backend.step();
  status = (await (await fetch(`${s.base}/api/status`)).json()) as AgentStatus;
});
afterAll(() => s.server.close());

const python = ['python3', '/usr/bin/python3'].find(
  (py) => spawnSync(py, ['-c', 'import prometheus_client.openmetrics.parser']).status === 0,
);

/** Family name → [type, unit, first sample's name, its value], as the format authors' parser reads `text`. */
function families(text: string): Record<string, [string, string, string, number]> {
  const script = [
    'import sys, json',
    'from prometheus_client.openmetrics.parser import text_string_to_metric_families as p',
    'print(json.dumps({f.name: [f.type, f.unit, f.samples[0].name, f.samples[0].value] for f in p(sys.stdin.read()) if f.samples}))',
  ].join('\n');
  const r = spawnSync(python!, ['-c', script], { input: text, encoding: 'utf8' });
  expect(r.stderr).toBe('');
  return JSON.parse(r.stdout) as Record<string, [string, string, string, number]>;
}

describe('disk figures in /metrics', () => {
  it.skipIf(python === undefined)('used, free, floor, days held, paused and deletions', () => {
    const disk = {
      usedBytes: 123456789,
      recordingsBytes: 100000000,
      capturesBytes: 23456789,
      freeBytes: 987654321,
      minFreeBytes: 2e9,
      historyDays: 13.5,
      paused: true,
      deletedFiles: 7,
    };
    const fams = families(renderMetrics({ ...status, disk }, 'test'));
    expect(fams.floorline_disk_used_bytes).toEqual(['gauge', 'bytes', 'floorline_disk_used_bytes', 123456789]);
    expect(fams.floorline_disk_free_bytes).toEqual(['gauge', 'bytes', 'floorline_disk_free_bytes', 987654321]);
    expect(fams.floorline_disk_min_free_bytes[3]).toBe(2e9);
    expect(fams.floorline_history_days).toEqual(['gauge', 'days', 'floorline_history_days', 13.5]);
    expect(fams.floorline_recording_paused[3]).toBe(1);
    expect(fams.floorline_retention_deleted_files).toEqual([
      'counter',
      '',
      'floorline_retention_deleted_files_total',
      7,
    ]);
  });

  it.skipIf(python === undefined)('history store: commit stalls, stalled, storing and rows waiting', () => {
    const store = {
      file: '/data/floorline.sqlite',
      storing: true,
      lastCommit: '2026-12-03T12:00:00.000Z',
      pending: 42,
      stalled: true,
      commitStalls: 2,
    };
    const fams = families(renderMetrics({ ...status, store }, 'test'));
    expect(fams.floorline_store_commit_stalls).toEqual(['counter', '', 'floorline_store_commit_stalls_total', 2]);
    expect(fams.floorline_store_stalled).toEqual(['gauge', '', 'floorline_store_stalled', 1]);
    expect(fams.floorline_store_storing).toEqual(['gauge', '', 'floorline_store_storing', 1]);
    expect(fams.floorline_store_pending_rows).toEqual(['gauge', '', 'floorline_store_pending_rows', 42]);
    expect(renderMetrics(status, 'test')).not.toMatch(/floorline_store_/);
  });

  it('absent without a retention policy', () => {
    expect(renderMetrics(status, 'test')).not.toMatch(/floorline_disk_/);
  });
});
