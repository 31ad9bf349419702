// The timeline's Report link: the test-record report (GET /api/report) of the span the timeline shows, opened in
// a new tab. The span is the one of the timeline's last query (its `from` and `to`), so the report covers exactly
// what the chart drew; before the first query, the span a query would ask for now.
import { timelineSpan, type TimelineQuery } from './timeline.ts';

/** The /api/report URL for a span of TIME bounds. */
export function reportUrl(span: { from: string; to: string }): string {
  return `api/report?${new URLSearchParams({ from: span.from, to: span.to }).toString()}`;
}

/** Points the link at the report of the timeline's span each time it is followed. */
export function attachReportLink(
  link: HTMLAnchorElement,
  shown: () => { from: string; to: string } | undefined,
  query: () => TimelineQuery,
  sampleNow: () => number | null,
): void {
  const update = (): void => {
    link.href = reportUrl(shown() ?? timelineSpan(query(), sampleNow()));
  };
  update();
  link.addEventListener('click', update);
  link.addEventListener('auxclick', update);
}
