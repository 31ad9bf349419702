// A span of months can hold thousands of incidents: the report lists the first MAX_INCIDENT_ROWS one by one,
// counts the rest by rule and channel (counted again here from the same list), draws spectra for at most
// MAX_INCIDENT_SPECTRA of them, merges the trend plots' incident shading per pixel column and draws a trend line
// with at most four points per column, so its size stays bounded.
import { describe, expect, it } from 'vitest';
import { renderReport } from '../../agent/report/render.ts';
import type { ReportData, ReportIncident } from '../../agent/report/collect.ts';
import { digestIncidents } from '../../agent/report/incident-digest.ts';
import { columnEnvelope, PLOT_COLUMNS } from '../../agent/report/svg-plot.ts';
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
    const x0 = Date.parse(incidents[0].start.wallTime);
    const x1 = Date.parse(incidents.at(-1)!.end!.wallTime);
    const digest = digestIncidents(incidents, {
      x0,
      x1,
      columns: PLOT_COLUMNS,
      openEndMs: x1,
      openEndT: 0,
      bands: [],
    });
    expect(digest.total).toBe(incidents.length);
    const d: ReportData = {
      runs: [],
      every: '1h',
      from: incidents[0].start.wallTime,
      to: incidents.at(-1)!.end!.wallTime,
      fromT: 0,
      toT: incidents.at(-1)!.end!.t,
      series: [],
      incidents: digest.listed as ReportIncident[],
      unlisted: digest.unlisted,
      shading: digest.shading,
      aboveSeconds: digest.aboveSeconds,
      notes: [],
      health: [],
      healthRuns: null,
      unstored: [],
      baselineChanges: [],
    };
    const f: ReportFigures = {
      settings: null,
      context: null,
      baseline: null,
      baselineTimeline: [],
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

  it('merges incident shading closer than one pixel column, and keeps the time above threshold of every incident', () => {
    // 3000 band-rise incidents of 10 s each, one a minute (a long week-like run), and one still open at the end.
    const start = Date.UTC(2026, 0, 1);
    const at = (s: number) => ({ sample: s * 8000, t: s, wallTime: new Date(start + s * 1000).toISOString() });
    const list = Array.from({ length: 3001 }, (_, n) => ({
      ...incident(n),
      id: `band-rise-bridge-s${n * 480000}`,
      channel: 'bridge',
      rules: ['band-rise'],
      members: [{ rule: 'band-rise', band: [20, 2000] as [number, number] }],
      start: at(n * 60),
      end: n === 3000 ? null : at(n * 60 + 10),
    }));
    const x1 = start + 3000 * 60e3 + 30e3;
    const digest = digestIncidents(list, {
      x0: start,
      x1,
      columns: PLOT_COLUMNS,
      openEndMs: x1,
      openEndT: 3000 * 60 + 30,
      bands: [{ key: 'bridge|20|2000', channel: 'bridge', band: [20, 2000] }],
    });
    const spans = digest.shading.get('bridge')!;
    // One column is (x1 − x0)/680 ≈ 265 s here: incidents a minute apart merge into one stretch.
    expect(spans.length).toBe(1);
    expect(spans[0]).toEqual({ from: start, to: x1, first: list[0].id, count: list.length });
    // 3000 closed incidents of 10 s plus the open one up to the span's end (30 s).
    expect(digest.aboveSeconds.get('bridge|20|2000')).toBe(3000 * 10 + 30);
    // Two incidents far apart stay two stretches.
    const two = digestIncidents([list[0], list[2999]], {
      x0: start,
      x1,
      columns: PLOT_COLUMNS,
      openEndMs: x1,
      openEndT: 0,
      bands: [],
    });
    expect(two.shading.get('bridge')!.map((s) => s.count)).toEqual([1, 1]);
  });

  it("draws at most four points per pixel column, keeping each column's extremes and the gaps", () => {
    // 100 000 points over 10 columns: a slow ramp with one spike and one gap.
    const n = 100_000;
    const points = Array.from({ length: n }, (_, i) => ({
      x: i,
      y: i === 54_321 ? 1000 : i >= 70_000 && i < 70_500 ? null : 1 + i / n,
    }));
    const xs = (x: number) => (x / n) * 10;
    const out = columnEnvelope(points, xs);
    const drawn = out.filter((p) => p.y !== null);
    expect(drawn.length).toBeLessThanOrEqual(4 * 10 + 4);
    // The spike survives decimation, and the gap lifts the pen exactly once.
    expect(Math.max(...drawn.map((p) => p.y!))).toBe(1000);
    expect(out.filter((p) => p.y === null).length).toBe(1);
    const gapAt = out.findIndex((p) => p.y === null);
    expect(out[gapAt - 1].x).toBe(69_999);
    expect(out[gapAt + 1].x).toBe(70_500);
    // Each column's first and last points are kept, so the line joins its neighbours where the data does.
    for (let c = 0; c < 10; c++) {
      const inCol = points.filter((p) => Math.floor(xs(p.x)) === c && p.y !== null);
      const kept = drawn.filter((p) => Math.floor(xs(p.x)) === c);
      expect(kept[0].x).toBe(inCol[0].x);
      expect(kept.at(-1)!.x).toBe(inCol.at(-1)!.x);
    }
  });
});
