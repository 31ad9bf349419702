// A span of months can hold thousands of incidents: the report lists the first MAX_INCIDENT_ROWS one by one,
// counts the rest by rule and channel (counted again here from the same list), and draws spectra for at most
// MAX_INCIDENT_SPECTRA of them, so its size stays bounded.
import { describe, expect, it } from 'vitest';
import { renderReport } from '../../agent/report/render.ts';
import type { ReportData, ReportIncident } from '../../agent/report/collect.ts';
import type { ReportFigures } from '../../agent/report/figures.ts';
import { MAX_INCIDENT_ROWS } from '../../agent/report/incident-spectra.ts';

function incident(n: number): ReportIncident {
  const rule = n % 3 === 0 ? 'mains' : 'spur';
  const channel = n % 2 === 0 ? 'bridge' : 'shorted';
  const t = n * 60;
  const at = (s: number) => ({
    sample: s * 8000,
    t: s,
    wallTime: new Date(Date.UTC(2026, 0, 1) + s * 1000).toISOString(),
  });
  return {
    id: `${rule}-${channel}-s${t * 8000}`,
    channel,
    rules: [rule],
    members: [{ rule, frequency: 50 }],
    start: at(t),
    end: at(t + 10),
    settled: { levelDb: 12.5 },
    peak: { levelDb: 13, sample: (t + 5) * 8000 },
    acknowledged: false,
    notes: [],
    capture: null,
    settledSample: null,
    history: [],
  };
}

describe('report bounds', () => {
  it('lists at most MAX_INCIDENT_ROWS incidents and counts the rest', () => {
    const incidents = Array.from({ length: MAX_INCIDENT_ROWS + 137 }, (_, n) => incident(n));
    const d: ReportData = {
      runs: [],
      every: '1h',
      from: incidents[0].start.wallTime,
      to: incidents.at(-1)!.end!.wallTime,
      fromT: 0,
      toT: incidents.at(-1)!.end!.t,
      series: [],
      incidents,
      notes: [],
      health: [],
      unstored: [],
    };
    const f: ReportFigures = {
      settings: null,
      context: null,
      baseline: null,
      baselineBandRms: new Map(),
      spectra: new Map(incidents.slice(0, 3).map((i) => [i.id, 'no capture was kept for this incident'])),
      mask: null,
      maskVerdicts: new Map(),
      incidentMask: new Map(),
    };
    const html = renderReport(d, f, { generatedAt: 'now', version: 'v', commit: 'c', link: (c) => c });
    expect(html.match(/<tr><td><a href="#inc-/g)?.length).toBe(MAX_INCIDENT_ROWS);
    const rest = incidents.slice(MAX_INCIDENT_ROWS);
    expect(html).toContain(`${rest.length} more incidents in this span, from ${rest[0].start.wallTime}`);
    for (const key of ['mains on bridge', 'mains on shorted', 'spur on bridge', 'spur on shorted']) {
      const n = rest.filter((i) => `${i.rules[0]} on ${i.channel}` === key).length;
      expect(html).toContain(`${key}: ${n}`);
    }
    // Detail sections only where the figures hold a spectrum or the reason for none.
    expect(html.match(/<section class="incident"/g)?.length).toBe(3);
  });
});
