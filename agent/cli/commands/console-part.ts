// The terminal report of run, replay and demo as a monitor part: the stream header, one line per event, a status
// line every few seconds of wall time, and the summary when the monitor closes.
import type { Monitor } from '../../monitor/monitor.ts';
import type { MonitorPart } from '../../monitor/parts.ts';
import { describeEvent, printStatusLine, printStreamHeader, printSummary } from './console-report.ts';

export interface ConsoleOptions {
  quiet: boolean;
  /** Wall seconds between status lines; 0 = none. */
  statusEvery: number;
  /** Frames in the file, for a replay's header. */
  frames?: () => number | undefined;
}

export function consolePart(o: ConsoleOptions) {
  return (m: Monitor): MonitorPart => {
    const p = m.pipeline;
    const wall0 = performance.now();
    if (m.history && !o.quiet) process.stdout.write(`history    ${m.history.path}\n`);
    const timer =
      o.statusEvery > 0 ? setInterval(() => printStatusLine(p, m.recorder), o.statusEvery * 1000) : undefined;
    return {
      name: 'console',
      onInfo: (info) => {
        if (!o.quiet) printStreamHeader(info, p, o.frames?.());
      },
      onEvent: (e) => {
        if (!o.quiet) process.stdout.write(describeEvent(e) + '\n');
      },
      close: () => {
        if (timer) clearInterval(timer);
        printSummary(p, performance.now() - wall0, m.digest, m.recorder);
      },
    };
  };
}
