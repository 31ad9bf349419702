// SIGTERM / SIGINT: the first stops the source, so the pipeline drains and the session flushes and closes
// recordings, the store and the event log, and the process exits 0 on its own. If that has not happened within
// the grace time the process exits 1 (a service manager then knows the stop was not clean). A second signal exits
// at once (128 + signal number, the shell convention).
import { constants } from 'node:os';

export const SHUTDOWN_GRACE_MS = 1800;

export interface ShutdownHandle {
  /** Removes the handlers (the session ended by itself). */
  uninstall(): void;
}

export function installShutdown(
  stop: () => Promise<void>,
  log: (line: string) => void,
  graceMs = SHUTDOWN_GRACE_MS,
): ShutdownHandle {
  let signalled = false;
  const onSignal = (name: NodeJS.Signals) => {
    const code = 128 + (constants.signals[name] ?? 15);
    if (signalled) {
      log(`second ${name}: exiting now`);
      process.exit(code);
    }
    signalled = true;
    log(`${name}: stopping; flushing recordings, store and event log (a second ${name} exits at once)`);
    setTimeout(() => {
      log(`stop did not finish within ${graceMs} ms; exiting`);
      process.exit(1);
    }, graceMs).unref();
    void stop();
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  return {
    uninstall() {
      process.off('SIGINT', onSignal);
      process.off('SIGTERM', onSignal);
    },
  };
}
