// Drives a scenario to an output: a serial/pty path (paced to the wall clock), stdout, or a WAV recording.
// Sample time decides everything; the wall clock only paces how fast blocks leave.
import { WavWriter } from '../wav/writer.ts';
import { FrameComposer, type WireFormat } from './frame-composer.ts';
import { ScenarioPlayer } from './player.ts';
import { PortSink } from './port-sink.ts';
import type { Scenario } from './scenario.ts';

export interface SimulationOptions {
  scenario: Scenario;
  seed: number;
  /** Total sample instants; Infinity runs until stop() is called. */
  totalFrames: number;
  output: { kind: 'port'; path: string; baudRate: number } | { kind: 'stdout' } | { kind: 'wav'; path: string };
  format: WireFormat;
  /** Pace blocks to the wall clock (always true for ports). */
  realtime: boolean;
  log(line: string): void;
}

export interface SimulationSummary {
  frames: number;
  blocks: number;
  bytes: number;
  droppedFrames: number;
  clipped: number[];
  connects: number;
}

export class Simulation {
  private stopped = false;
  readonly player: ScenarioPlayer;

  constructor(private readonly o: SimulationOptions) {
    this.player = new ScenarioPlayer(o.scenario, o.seed);
  }

  stop(): void {
    this.stopped = true;
  }

  async run(): Promise<SimulationSummary> {
    return this.o.output.kind === 'wav' ? this.runWav(this.o.output.path) : this.runStream();
  }

  private runWav(path: string): SimulationSummary {
    if (!Number.isFinite(this.o.totalFrames)) throw new Error('a WAV recording needs a duration');
    const s = this.o.scenario;
    const p = this.player;
    const writer = new WavWriter(path, {
      sampleRate: s.rate,
      channels: s.channels.map((c) => ({
        name: c.name,
        unit: c.unit,
        scale: c.perCount,
        fullScaleCounts: c.fullScale,
        ...(c.gain !== undefined ? { gain: c.gain } : {}),
        ...(c.budget ? { budget: c.budget } : {}),
      })),
      source: { kind: 'simulator', label: `${s.board} (seed ${this.o.seed})` },
      boardId: s.board,
      firstSample: 0,
      notes: `floorline simulate, seed ${this.o.seed}; link faults of the scenario do not apply to WAV output`,
    });
    let blocks = 0;
    let sinceFlush = 0;
    while (p.position < this.o.totalFrames && !this.stopped) {
      const n = Math.min(p.framesPerBlock, this.o.totalFrames - p.position);
      p.next(n);
      writer.append(p.volts, n);
      blocks++;
      sinceFlush += n;
      if (sinceFlush >= s.rate * 10) {
        writer.flush();
        sinceFlush = 0;
      }
    }
    writer.close();
    return { frames: p.position, blocks, bytes: 0, droppedFrames: 0, clipped: [...p.clipped], connects: 0 };
  }

  private async runStream(): Promise<SimulationSummary> {
    const o = this.o;
    const p = this.player;
    const composer = new FrameComposer(p, o.format);
    let describe = true;
    let port: PortSink | undefined;
    let write: (b: Uint8Array) => Promise<void>;
    if (o.output.kind === 'port') {
      const sink = new PortSink(o.output.path, o.output.baudRate, {
        onConnectOrRequest: () => (describe = true),
        log: o.log,
      });
      port = sink;
      write = async (b) => sink.write(b);
    } else {
      write = (b) =>
        new Promise<void>((resolve, reject) => process.stdout.write(b, (err) => (err ? reject(err) : resolve())));
    }
    const paced = o.realtime || o.output.kind === 'port';
    const blockMs = (p.framesPerBlock / o.scenario.rate) * 1000;
    const t0 = performance.now();
    let bytes = 0;
    let blocks = 0;
    while (p.position < o.totalFrames && !this.stopped) {
      const now = performance.now();
      if (port) {
        port.checkPath();
        if (!port.connected) await port.ensureOpen(now);
      }
      if (describe && (!port || port.connected)) {
        describe = false;
        const d = composer.descriptorBytes();
        await write(d);
        bytes += d.length;
      }
      const n = Math.min(p.framesPerBlock, o.totalFrames - p.position);
      const first = p.next(n);
      const out = composer.compose(first, n);
      if (out.length > 0) await write(out);
      bytes += out.length;
      blocks++;
      if (paced) {
        const due = t0 + blocks * blockMs;
        const wait = due - performance.now();
        if (wait > 1) await new Promise((r) => setTimeout(r, wait));
      }
    }
    if (port) await port.close();
    return {
      frames: p.position,
      blocks,
      bytes,
      droppedFrames: composer.dropped,
      clipped: [...p.clipped],
      connects: port?.connects ?? 0,
    };
  }
}
