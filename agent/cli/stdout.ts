// Writing a command's output to stdout when the reader may go away early (`floorline analyze --csv | head`): a
// closed pipe (EPIPE) ends the output quietly instead of crashing with an unhandled 'error' event.
let closed = false;
let installed = false;

function install(): void {
  if (installed) return;
  installed = true;
  process.stdout.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') {
      closed = true;
      return;
    }
    throw err;
  });
}

/** Writes pieces in order, waiting for the pipe to drain; stops when the reader has closed it. */
export async function writeOutput(pieces: Iterable<string>): Promise<void> {
  install();
  for (const piece of pieces) {
    if (closed) return;
    if (!process.stdout.write(piece)) {
      await new Promise<void>((resolve) => {
        const done = (): void => {
          process.stdout.off('drain', done);
          process.stdout.off('error', done);
          resolve();
        };
        process.stdout.once('drain', done);
        process.stdout.once('error', done);
      });
    }
  }
}
