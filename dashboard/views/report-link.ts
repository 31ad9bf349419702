// The timeline's Report link: the test-record report (GET /api/report) of the span the timeline shows, opened in
// a new tab. The span's start is the timeline's own query (trendUrl), so the two never disagree; like the
// timeline, it runs to the newest row of the store.
import { trendUrl, type TimelineQuery } from './timeline.ts';

/** The /api/report URL for the span of a timeline query. */
export function reportUrl(q: TimelineQuery, sampleNow: number | null, now = Date.now()): string {
  const from = new URL(trendUrl(q, 10, sampleNow, now), 'http://x/').searchParams.get('from') ?? '';
  return `api/report?${new URLSearchParams({ from }).toString()}`;
}

/** Points the link at the report of the timeline's span each time it is followed. */
export function attachReportLink(
  link: HTMLAnchorElement,
  query: () => TimelineQuery,
  sampleNow: () => number | null,
): void {
  const update = (): void => {
    link.href = reportUrl(query(), sampleNow());
  };
  update();
  link.addEventListener('click', update);
  link.addEventListener('auxclick', update);
}
