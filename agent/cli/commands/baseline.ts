// `floorline baseline FILE -o BASELINE.json`: capture a baseline (averaged density, band powers, settling check)
// from a recording, with the same analysis settings the live pipeline will use.
import { applyUnitOverride } from '../../wav/unit-override.ts';
import { UNIT_FLAG } from './unit-flag.ts';
import { defineCommand, defineFlags, type ParsedArgs } from '../args.ts';
import { InputError, UsageError } from '../../errors.ts';
import { ANALYSIS_FLAGS, readAnalysisFlags } from './monitor-flags.ts';
import type { AnalysisSettings } from '../../../protocol/settings.ts';
import { WavReader } from '../../wav/reader.ts';
import { windowMainLobeHalfWidth } from '../../../dsp/windows.ts';
import { BaselineCapture, baselineChannelOf } from '../../baseline/capture.ts';
import { forEachFiniteRun } from '../../pipeline/conditioner.ts';
import { writeBaseline } from '../../baseline/format.ts';
import { defaultBands } from '../../rules/default-bands.ts';
import { parseBand } from '../../../protocol/bands.ts';

async function runBaseline(args: ParsedArgs<typeof BASELINE_FLAGS>): Promise<number> {
  const [file] = args.positionals;
  const f = args.flags;
  const out = f.out;
  if (!out)
    throw new UsageError(
      'floorline baseline: missing -o FILE (where to write the baseline), e.g. -o floorline-data/baselines/rig.json.',
    );
  const { segment, window, overlap, detrend } = readAnalysisFlags(f, 'baseline');
  const bandsGiven = f.band.map((b) => {
    try {
      return parseBand(b);
    } catch (err) {
      throw new UsageError(`floorline baseline: ${(err as Error).message}.`);
    }
  });
  let reader: WavReader;
  try {
    reader = await WavReader.open(file, { scale: f.scale });
  } catch (err) {
    throw new InputError(`floorline baseline: ${(err as Error).message}`);
  }
  try {
    const info = reader.info;
    const unitProblem = applyUnitOverride(info.channels, f.unit, file);
    if (unitProblem) throw new InputError(`floorline baseline: ${unitProblem}`);
    for (const w of info.warnings) process.stderr.write(`floorline baseline: warning: ${w}\n`);
    const settings: AnalysisSettings = {
      sampleRate: info.sampleRate,
      segment,
      window,
      overlap,
      detrend,
    };
    const skip = Math.round((f['start-time'] ?? 0) * info.sampleRate);
    const available = info.frames - skip;
    const wanted = f.seconds !== undefined ? Math.round(f.seconds * info.sampleRate) : available;
    if (wanted > available) {
      throw new InputError(
        `floorline baseline: ${file} holds ${(available / info.sampleRate).toFixed(2)} s after the start; ask for at most that with --seconds.`,
      );
    }
    const lobe = windowMainLobeHalfWidth(window);
    for (const b of bandsGiven) {
      if (b.high > info.sampleRate / 2)
        throw new UsageError(
          `floorline baseline: --band ${b.low}:${b.high} reaches past Nyquist (${info.sampleRate / 2} Hz); lower HI.`,
        );
    }
    let capture: BaselineCapture;
    try {
      capture = new BaselineCapture({
        settings,
        // The sidecar's calibration (if the recording was made calibrated) says at which point the densities are.
        channels: info.channels.map((c, i) =>
          baselineChannelOf({ ...c, calibration: info.metadata?.channels[i]?.calibration }),
        ),
        firstSample: info.firstSample + skip,
        samples: wanted,
        bands: bandsGiven.length ? bandsGiven : defaultBands(info.sampleRate, segment, lobe),
        source: file,
        notes: f.notes ?? '',
      });
    } catch (err) {
      throw new InputError(`floorline baseline: ${file}: ${(err as Error).message}.`);
    }
    let excluded = 0;
    let complete = false;
    for (let b = await reader.read(); b && !complete; b = await reader.read()) {
      const block = b;
      // Frames holding NaN/±Inf/overflow are excluded like a gap, as in the live pipeline.
      excluded += forEachFiniteRun(block.data, 0, block.frames, (from, to, finite) => {
        if (complete) return;
        if (!finite) capture.gap(block.firstSample + to);
        else
          complete = capture.push({
            firstSample: block.firstSample + from,
            frames: to - from,
            data: from === 0 ? block.data : block.data.map((d) => d.subarray(from)),
          });
      });
    }
    if (excluded > 0)
      process.stderr.write(
        `floorline baseline: warning: ${excluded} frames hold NaN, ±Inf or values beyond float32; they are excluded like a gap\n`,
      );
    let baseline;
    try {
      baseline = capture.result(new Date().toISOString());
    } catch (err) {
      throw new InputError(`floorline baseline: ${file}: ${(err as Error).message}.`);
    }
    try {
      await writeBaseline(out, baseline);
    } catch (err) {
      throw new InputError(
        `floorline baseline: cannot write ${out} (${(err as Error).message}); choose a writable path.`,
      );
    }
    const c0 = baseline.channels[0];
    process.stdout.write(
      `baseline ${out}: ${baseline.channels.length} channel(s), ${baseline.span.seconds.toFixed(2)} s from sample ${baseline.span.firstSample}, ` +
        `${c0.segments} segments (${c0.equivalentAverages.toFixed(1)} equivalent averages), settings ${baseline.settingsHash}\n`,
    );
    for (const w of baseline.settling.warnings) process.stderr.write(`floorline baseline: warning: ${w}\n`);
    return 0;
  } finally {
    await reader.close();
  }
}

const BASELINE_FLAGS = defineFlags([
  { name: 'out', short: 'o', kind: 'string', value: 'FILE', help: 'where to write the baseline JSON (required)' },
  {
    name: 'band',
    kind: 'list',
    value: 'LO:HI',
    help: 'band in Hz to store (default: decade bands and the whole usable band)',
  },
  { name: 'start-time', kind: 'number', value: 'S', min: 0, help: 'skip this many seconds of the recording first' },
  { name: 'seconds', kind: 'number', value: 'S', min: 0, help: 'length of the span (default: the rest of the file)' },
  {
    name: 'scale',
    kind: 'number',
    value: 'V',
    min: Number.MIN_VALUE,
    help: 'volts per full scale for integer PCM or unlabelled float files',
  },
  UNIT_FLAG,
  { name: 'notes', kind: 'string', value: 'TEXT', help: 'free text stored with the baseline' },
  ...ANALYSIS_FLAGS,
]);

export const baselineCommand = defineCommand({
  name: 'baseline',
  summary: 'capture a noise-floor baseline from a recording, for the alarms to compare against',
  details: [
    'Stores the analysis settings and their hash, per channel the mean-averaged density with its equivalent number of',
    'averages (Welch 1967) and the band RMS values, the capture span in sample time, notes, and a settling check:',
    'when the floor differs between the two halves of the span beyond their statistical spread, a warning is printed',
    'and recorded in the file. Use the same --segment/--window/--overlap/--detrend as the live run: a baseline with',
    'other settings is refused at comparison time, naming the setting.',
    'Example: floorline baseline quiet.wav -o floorline-data/baselines/rig.json --notes "LNA on, lid closed"',
  ].join('\n'),
  positionals: [{ name: 'FILE', help: 'WAV recording of the quiet rig', required: true }],
  flags: BASELINE_FLAGS,
  run: runBaseline,
});
