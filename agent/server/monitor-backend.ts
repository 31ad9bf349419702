// The server's view of a running monitor: forwards the read model, and fans the monitor's stream out to the
// server's subscribers as a monitor part. Keeps no state of the run; only the wall-clock pacing of low-frequency
// updates to clients lives here (display pacing, not measurement).
import type { Monitor } from '../monitor/monitor.ts';
import type { MonitorPart } from '../monitor/parts.ts';
import type { LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';
import { LatestPacer } from '../lowfreq/latest-pacer.ts';
import type { BackendSubscriber, ServerBackend } from './backend.ts';

/** Most low-frequency updates per second sent to clients (the newest wins). */
const LOW_FREQUENCY_UPDATES_PER_SECOND = 10;

export function monitorBackend(m: Monitor): { backend: ServerBackend; part: MonitorPart } {
  const subscribers = new Set<BackendSubscriber>();
  const lf = m.lowFrequency;
  if (lf) {
    const pacer = new LatestPacer<LowFrequencyUpdate>(
      (update) => subscribers.forEach((s) => s.lowFrequency?.({ type: 'lowfreq', update })),
      1000 / LOW_FREQUENCY_UPDATES_PER_SECOND,
    );
    lf.onContext((context) => subscribers.forEach((s) => s.lowFrequency?.({ type: 'lowfreq-context', context })));
    lf.onUpdate((u) => pacer.offer(u));
  }
  const part: MonitorPart = {
    name: 'dashboard-server',
    onInfo: (i) => subscribers.forEach((s) => s.info(i)),
    onSnapshot: (x) => subscribers.forEach((s) => s.snapshot(x)),
    onBlock: (b) => subscribers.forEach((s) => s.block(b)),
    onEvent: (e) => subscribers.forEach((s) => s.event(e)),
  };
  const history = m.history;
  const backend: ServerBackend = {
    dataRoot: m.folder.root,
    history: history ? { path: history.path, note: (text, incident) => history.note(text, incident) } : undefined,
    subscribe(s) {
      subscribers.add(s);
      return () => subscribers.delete(s);
    },
    streamInfo: () => m.streamInfo(),
    status: () => m.status(),
    latestSnapshot: () => m.latestSnapshot(),
    baseline: () => m.baseline(),
    recentEvents: (limit) => m.recentEvents(limit),
    mainsHz: () => m.mainsHz(),
    limitMasks: () => m.limitMasks(),
    health: () => m.health(),
    captureBaseline: (request) => m.captureBaseline(request),
    setRecording: (on) => m.setRecording(on),
    restoreBaseline: () => m.restoreBaseline(),
    setAnalysis: (change) => m.setAnalysis(change),
    acknowledge: (alarmId) => m.acknowledge(alarmId),
    shelve: (alarmId, seconds) => {
      const info = m.streamInfo();
      const untilSample = Math.max(0, m.pipeline.counters().lastSample) + Math.round(seconds * (info?.sampleRate ?? 0));
      return { shelved: m.shelve(alarmId, untilSample), untilSample };
    },
    lowFrequencyLatest: () => {
      const context = lf?.context();
      return context ? { context, update: lf!.latest() } : null;
    },
  };
  return { backend, part };
}
