// Every line the CLI prints to the terminal or a log passes through printable(): names and texts from outside
// (descriptors, sidecars, configs, notes, channel names) must not move the cursor, retitle the terminal or hide
// lines, wherever a message happens to quote them. Text chunks are filtered on their way out; byte chunks (a WAV
// written to stdout) pass untouched. The progress bar draws with \r and an erase sequence on purpose, through
// rawStderr(), the one way around the filter.
import { printable } from '../../protocol/limits.ts';

type Write = typeof process.stdout.write;
const originals = new Map<NodeJS.WriteStream, Write>();

/** Filters text written to stdout and stderr from now on (once per process). */
export function guardTerminalOutput(): void {
  for (const stream of [process.stdout, process.stderr]) {
    if (originals.has(stream)) continue;
    const write = stream.write.bind(stream) as Write;
    originals.set(stream, write);
    stream.write = ((chunk: string | Uint8Array, ...rest: unknown[]) =>
      (write as (c: string | Uint8Array, ...r: unknown[]) => boolean)(
        typeof chunk === 'string' ? printable(chunk) : chunk,
        ...rest,
      )) as Write;
  }
}

/** stderr without the filter, for drawing our own terminal controls (the progress bar). */
export function rawStderr(): { isTTY?: boolean; columns?: number; write(text: string): unknown } {
  const write = originals.get(process.stderr) ?? process.stderr.write.bind(process.stderr);
  return {
    get isTTY() {
      return process.stderr.isTTY;
    },
    get columns() {
      return process.stderr.columns;
    },
    write: (text: string) => write(text),
  };
}
