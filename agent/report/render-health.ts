// Section 5 of the report: the agent's counters per run inside the span and their total (samples, gaps and
// samples lost, CRC and malformed frames, dropped blocks, clipped samples, files deleted by retention), the agent
// starts, the health events by rule and state, and the spans the disk refused.
import { esc } from './html-escape.ts';
import type { ReportData } from './collect.ts';
import { HEALTH_FIELDS, zeroCounts, type HealthCounts, type HealthField } from '../store/health.ts';

const HEADINGS: Record<HealthField, string> = {
  samples: 'samples',
  gaps: 'gaps',
  lostSamples: 'samples lost',
  crcErrors: 'CRC errors',
  syncErrors: 'malformed frames, resync bytes',
  nonfiniteFrames: 'non-finite frames',
  droppedBlocks: 'dropped blocks',
  droppedSamples: 'dropped samples',
  clippedSamples: 'clipped samples',
  deletedFiles: 'files deleted by retention',
};

const cells = (c: HealthCounts) => HEALTH_FIELDS.map(([f]) => `<td class="n">${c[f]}</td>`).join('');

export function renderHealth(d: ReportData): string {
  const out: string[] = [`<h2>5. Health</h2>`];
  const runs = d.healthRuns;
  if (runs === null) {
    out.push(
      `<p>Agent runs in the store: ${d.runs.length}. This store predates the health counters (schema 3): only the events below are known; an agent of this version keeps the counters from its next run.</p>`,
    );
  } else {
    // A run is one start of a stream or one change of settings; a new process id is a new start of the agent.
    const pids = new Map(d.runs.map((r) => [r.id, r.pid]));
    let starts = 0;
    let previous: number | undefined;
    for (const r of runs) {
      if (pids.get(r.run) !== previous) starts++;
      previous = pids.get(r.run);
    }
    const total = zeroCounts();
    for (const r of runs) for (const [f] of HEALTH_FIELDS) total[f] += r.counts[f];
    out.push(
      `<p>Runs with counters in the span: ${runs.length}, from ${starts} start${starts === 1 ? '' : 's'} of the agent (${Math.max(0, starts - 1)} restart${starts === 2 ? '' : 's'}); runs written before the store kept counters (schema 3) have none. Counts of the agent inside the span, to the minute of sample time (the same counters as <code>/metrics</code>).</p>`,
    );
    out.push(
      `<table class="summary"><tr><th>run</th>${HEALTH_FIELDS.map(([f]) => `<th>${esc(HEADINGS[f])}</th>`).join('')}</tr>` +
        runs.map((r) => `<tr><td class="n">${r.run}</td>${cells(r.counts)}</tr>`).join('') +
        `<tr><th>total</th>${cells(total)}</tr></table>`,
    );
  }
  out.push(
    `<table><tr><th>rule</th><th>state</th><th>events</th></tr>${d.health.map((h) => `<tr><td>${esc(h.rule)}</td><td>${esc(h.state)}</td><td class="n">${h.count}</td></tr>`).join('') || '<tr><td colspan="3">no gap, link, clip, overrun, disk or retention events</td></tr>'}</table>`,
  );
  out.push(
    `<p>Spans not stored (disk refused writes): ${d.unstored.length ? d.unstored.map((u) => `${esc(u.from)} – ${esc(u.to)} (${esc(u.reason)})`).join('; ') : 'none'}.</p>`,
  );
  return out.join('\n');
}
