// Hangs the notifier on a running pipeline: every event is offered to the sinks' filters, every snapshot moves
// their sample clock on, and a notification given up comes back as an info event in the event log.
import { join } from 'node:path';
import type { Pipeline } from '../pipeline/pipeline.ts';
import type { SinkConfig } from '../config/rig-config.ts';
import { Notifier } from './notifier.ts';

export const OUTBOX_FILE = 'notify-outbox.jsonl';

export function attachNotifier(
  pipeline: Pipeline,
  dataRoot: string,
  sinks: readonly SinkConfig[],
  log: (line: string) => void,
): Notifier {
  const notifier = new Notifier({
    sinks,
    outboxPath: join(dataRoot, OUTBOX_FILE),
    onEvent: (e) => pipeline.emitEvent(e),
    log,
  });
  pipeline.on('event', (e) => notifier.offer(e), 'notifier');
  pipeline.on('snapshot', (s) => notifier.tick(s.t), 'notifier');
  return notifier;
}
