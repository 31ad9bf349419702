// Per-channel calibration from the rig config. It rewrites the stream description a source announces (name, unit,
// unit per count), so the conditioner's one multiplication by `scale` applies it and everything downstream
// (spectra, bands, events, recordings and their sidecars) is in calibrated, optionally input-referred, units.
// A recording made that way carries the calibration in its sidecar; replaying it applies nothing twice.
import type {
  ChannelCalibration,
  ChannelInfo,
  Source,
  SourceCounters,
  SourceSink,
  StreamInfo,
} from '../../protocol/stream.ts';
import type { ChannelConfig } from './rig-config.ts';
import type { BaselineFile } from '../baseline/format.ts';

export interface CalibrationResult {
  channels: ChannelInfo[];
  /** Things the user should know (a channel count mismatch, a recording already calibrated). */
  notes: string[];
}

function sameCalibration(a: ChannelCalibration, b: ChannelCalibration): boolean {
  return a.gain === b.gain && a.inputReferred === b.inputReferred && a.unit === b.unit;
}

/** The calibration a config channel asks for (what the sidecar records). */
export function calibrationOf(c: ChannelConfig): ChannelCalibration {
  return {
    unit: c.unit,
    ...(c.voltsPerCount !== undefined ? { voltsPerCount: c.voltsPerCount } : {}),
    ...(c.gain !== undefined ? { gain: c.gain } : {}),
    inputReferred: c.inputReferred === true,
    ...(c.budget !== undefined ? { budget: c.budget } : {}),
  };
}

/**
 * Applies the config's channels, by position, to a stream's channels. For a board (raw counts) `voltsPerCount`
 * replaces the descriptor's unit per count; a recording is already in units, so only the gain applies. With
 * `inputReferred` the scale is divided by the gain. A channel already carrying a calibration (a recording made
 * with one) is left alone.
 */
export function calibrateChannels(stream: StreamInfo, config: readonly ChannelConfig[]): CalibrationResult {
  const notes: string[] = [];
  if (config.length !== stream.channels.length) {
    notes.push(
      `the config lists ${config.length} channel(s), the ${stream.source.kind} has ${stream.channels.length}; calibrating the first ${Math.min(config.length, stream.channels.length)} by position`,
    );
  }
  const fromCounts = stream.source.kind !== 'replay';
  const channels = stream.channels.map((ch, i) => {
    const c = config[i];
    if (!c) return ch;
    const wanted = calibrationOf(c);
    if (ch.calibration) {
      if (!sameCalibration(ch.calibration, wanted)) {
        notes.push(
          `${ch.name}: the recording is already calibrated (gain ${ch.calibration.gain ?? 1}, ${ch.calibration.inputReferred ? 'input-referred' : 'not input-referred'}, ${ch.calibration.unit}); its units are kept, the config's channel ${i} is not applied again`,
        );
      }
      return ch;
    }
    if (!fromCounts && c.voltsPerCount !== undefined)
      notes.push(
        `${c.name}: voltsPerCount applies to a board's raw counts; the recording is already in ${ch.unit}, so only the gain is used`,
      );
    let scale = fromCounts && c.voltsPerCount !== undefined ? c.voltsPerCount : ch.scale;
    if (c.inputReferred && c.gain !== undefined) scale /= c.gain;
    return { ...ch, name: c.name, unit: c.unit, scale, calibration: wanted };
  });
  return { channels, notes };
}

/** Per channel, the factor calibration multiplies samples by (1 where nothing changed); for rescaling a baseline. */
export function calibrationFactors(before: readonly ChannelInfo[], after: readonly ChannelInfo[]): number[] {
  return after.map((a, i) => a.scale / before[i].scale);
}

/** A source whose announced channels are calibrated by the rig config; everything else passes through. */
export class CalibratedSource implements Source {
  readonly kind: Source['kind'];
  /** Factors applied at the last stream info (see calibrationFactors). */
  factors: number[] = [];

  constructor(
    private readonly inner: Source,
    private readonly config: readonly ChannelConfig[],
    private readonly note: (text: string) => void,
  ) {
    this.kind = inner.kind;
  }

  start(sink: SourceSink): Promise<void> {
    let noted = false;
    const wrapped: SourceSink = {
      info: (info) => {
        const r = calibrateChannels(info, this.config);
        if (!noted) for (const n of r.notes) this.note(n);
        noted = true;
        this.factors = calibrationFactors(info.channels, r.channels);
        sink.info({ ...info, channels: r.channels });
      },
      block: (b) => sink.block(b),
      gap: (g) => sink.gap(g),
      link: (l) => sink.link(l),
      end: () => sink.end(),
    };
    return this.inner.start(wrapped);
  }

  stop(): Promise<void> {
    return this.inner.stop();
  }

  counters(): SourceCounters {
    return this.inner.counters();
  }
}

/**
 * A baseline taken from an uncalibrated recording, brought into the units the config's calibration gives a replay
 * of it (PSD × f², band RMS × f with f = 1/gain for an input-referred channel), so the comparison stays valid.
 */
export function rescaleBaselineForReplay(
  baseline: BaselineFile,
  config: readonly ChannelConfig[],
  /** Channels the recording already carries a calibration for: the config is not applied to them again. */
  calibratedInRecording: ReadonlySet<number> = new Set(),
): { baseline: BaselineFile; changed: string[] } {
  const changed: string[] = [];
  const channels = baseline.channels.map((ch, i) => {
    const c = config[i];
    if (!c || calibratedInRecording.has(i)) return ch;
    // A baseline taken at the input already (from a calibrated stream) is not divided again.
    const f = c.inputReferred && c.gain !== undefined && ch.referredTo !== 'input' ? 1 / c.gain : 1;
    if (f === 1 && c.name === ch.name && c.unit === ch.unit) return ch;
    changed.push(`${ch.name} → ${c.name}${f !== 1 ? ` (×${f})` : ''}`);
    return {
      ...ch,
      name: c.name,
      unit: c.unit,
      ...(f !== 1 ? { referredTo: 'input' as const } : {}),
      psd: ch.psd.map((p) => p * f * f),
      bands: ch.bands.map((b) => ({ ...b, rms: b.rms * f })),
    };
  });
  return { baseline: { ...baseline, channels }, changed };
}
