// Hangs the notifier on a running monitor as one part: every event is offered to the sinks' filters, every
// snapshot moves their sample clock on, and a notification given up comes back as an info event in the event log.
import { join } from 'node:path';
import type { Pipeline } from '../pipeline/pipeline.ts';
import type { PartSink } from '../monitor/parts.ts';
import type { SinkConfig } from '../config/rig-config.ts';
import { Notifier } from './notifier.ts';

export const OUTBOX_FILE = 'notify-outbox.jsonl';

export function attachNotifier(
  pipeline: Pipeline,
  parts: PartSink,
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
  parts.attach({ name: 'notifier', onEvent: (e) => notifier.offer(e), onSnapshot: (s) => notifier.tick(s.t) });
  return notifier;
}
