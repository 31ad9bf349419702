// The report's computed figures beyond the store's rows: the baseline's band RMS for every stored band, each
// incident's spectrum from its capture, and with a limit mask the verdicts per channel and band (the same mask
// reader and log-log interpolation `analyze --mask` and the live limit rule use).
import { bandBins, bandRmsInBins } from '../../dsp/bands.ts';
import { judgeMask, maskOnBins, type MaskVerdict } from '../../dsp/measure/limit-mask.ts';
import type { AnalysisSettings } from '../../protocol/settings.ts';
import { readBaseline, type BaselineFile } from '../baseline/format.ts';
import { readMaskFile, type MaskFile } from '../analysis/mask-file.ts';
import { AnalysisInputError } from '../analysis/input-error.ts';
import type { LoadedRigConfig } from '../config/rig-config.ts';
import { fileSha256, type RunContext } from '../store/run-context.ts';
import type { ReportData, ReportIncident } from './collect.ts';
import {
  capturePath,
  incidentSpectrum,
  MAX_INCIDENT_ROWS,
  MAX_INCIDENT_SPECTRA,
  type IncidentSpectrum,
} from './incident-spectra.ts';

export interface BandMaskVerdict {
  pass: boolean;
  /** Mask RMS over the band's bins against the loudest single-segment band RMS, dB (positive: under the mask). */
  bandMarginDb: number;
  /** Worst bin over the incident spectra of the channel in this band, when any lies under the mask. */
  worstBin: { marginDb: number; frequency: number; incident: string } | null;
}

/** A rig config given to the report: the file as loaded and validated, and its SHA-256 now. */
export interface RigConfigRef {
  loaded: LoadedRigConfig;
  sha256: string | null;
}

export interface ReportFigures {
  /** The rig config of `report --config`, or null (the header then shows the run's own record). */
  rig?: RigConfigRef | null;
  settings: AnalysisSettings | null;
  context: RunContext | null;
  baseline: {
    file: BaselineFile | null;
    /** Why the file could not be used, when it could not. */
    problem?: string;
    /** SHA-256 of the file now, against the one the run recorded. */
    sha256Now: string | null;
  } | null;
  /** The baselines in force over the span, oldest first: each run's at its start, then its mid-run changes. */
  baselineTimeline: BaselineInForce[];
  /** Baseline band RMS by `channel|low|high`, of the baseline in force at the span's end. */
  baselineBandRms: Map<string, number>;
  spectra: Map<string, IncidentSpectrum | string>;
  mask: (MaskFile & { sha256: string | null }) | null;
  /** By `channel|low|high`; a string says why the band was not judged. */
  maskVerdicts: Map<string, BandMaskVerdict | string>;
  /** Per incident, the verdict of its whole spectrum. */
  incidentMask: Map<string, MaskVerdict>;
}

/** A baseline compared against from `wallMs` on (null: none), with its file when it could be read. */
export interface BaselineInForce {
  wallMs: number;
  ref: RunContext['baseline'];
  file: BaselineFile | null;
}

/** The baseline in force at a wall time (ms), or undefined before the first run. */
export function baselineAt(timeline: readonly BaselineInForce[], wallMs: number): BaselineInForce | undefined {
  let found: BaselineInForce | undefined;
  for (const b of timeline) if (b.wallMs <= wallMs) found = b;
  return found;
}

/** Each run's baseline from its start and its mid-run changes, in wall-time order; each file read once. */
async function baselineTimeline(d: ReportData): Promise<BaselineInForce[]> {
  const files = new Map<string, BaselineFile | null>();
  const read = async (ref: RunContext['baseline']) => {
    if (!ref) return null;
    if (!files.has(ref.path)) files.set(ref.path, await readBaseline(ref.path).catch(() => null));
    return files.get(ref.path)!;
  };
  const entries: { wallMs: number; ref: RunContext['baseline'] }[] = [
    ...d.runs.filter((r) => r.context).map((r) => ({ wallMs: Date.parse(r.startWall), ref: r.context!.baseline })),
    ...d.baselineChanges.map((c) => ({ wallMs: Date.parse(c.wallTime), ref: c.baseline })),
  ].sort((a, b) => a.wallMs - b.wallMs);
  const out: BaselineInForce[] = [];
  for (const e of entries) out.push({ ...e, file: await read(e.ref) });
  return out;
}

export const bandKey = (channel: string, band: readonly [number, number]) => `${channel}|${band[0]}|${band[1]}`;

const frequencies = (s: AnalysisSettings) => {
  const f = new Float64Array(s.segment / 2 + 1);
  for (let k = 0; k < f.length; k++) f[k] = (k * s.sampleRate) / s.segment;
  return f;
};

async function loadBaseline(ctx: RunContext | null): Promise<ReportFigures['baseline']> {
  if (!ctx?.baseline) return null;
  const sha256Now = fileSha256(ctx.baseline.path);
  try {
    return { file: await readBaseline(ctx.baseline.path), sha256Now };
  } catch (err) {
    return { file: null, problem: (err as Error).message, sha256Now };
  }
}

export async function computeFigures(
  d: ReportData,
  o: { maskPath?: string; rig?: RigConfigRef; onIncident?: (done: number, total: number) => void },
): Promise<ReportFigures> {
  // The last run that started inside the span holds the settings the span was analysed with.
  const run = [...d.runs].reverse().find((r) => r.startWall <= d.to) ?? d.runs.at(-1);
  const settings = (run?.settings as AnalysisSettings | undefined) ?? null;
  const context = run?.context ?? null;
  const baseline = await loadBaseline(context);
  const bandSeries = d.series.filter((s) => s.quantity === 'bandRms' && s.band);
  const baselineBandRms = new Map<string, number>();
  const timeline = await baselineTimeline(d);
  // The summary's baseline figure is the baseline in force at the span's end (a mid-run capture included).
  const atEnd = baselineAt(timeline, Date.parse(d.to));
  const b = atEnd && atEnd.ref?.path !== context?.baseline?.path ? atEnd.file : baseline?.file;
  if (b) {
    for (const s of bandSeries) {
      const ch = b.channels.find((c) => c.name === s.channel);
      if (!ch) continue;
      const r = bandBins(ch.psd.length, b.binHz, s.band![0], s.band![1]);
      baselineBandRms.set(
        bandKey(s.channel, s.band!),
        bandRmsInBins(Float64Array.from(ch.psd), b.binHz, r.first, r.last),
      );
    }
  }

  const spectra = new Map<string, IncidentSpectrum | string>();
  const list = d.incidents.slice(0, MAX_INCIDENT_SPECTRA);
  for (const [n, i] of list.entries()) {
    o.onIncident?.(n, list.length);
    spectra.set(
      i.id,
      settings
        ? await incidentSpectrum(i, capturePath(i, context?.dataDir), settings).catch(
            (err: Error) => `its capture could not be read (${err.message})`,
          )
        : 'the store holds no analysis settings for this span',
    );
  }
  for (const i of d.incidents.slice(MAX_INCIDENT_SPECTRA, MAX_INCIDENT_ROWS))
    spectra.set(i.id, `only the first ${MAX_INCIDENT_SPECTRA} incidents of a span get a spectrum`);

  const maskVerdicts = new Map<string, BandMaskVerdict | string>();
  const incidentMask = new Map<string, MaskVerdict>();
  let mask: ReportFigures['mask'] = null;
  if (o.maskPath) {
    if (!settings)
      throw new AnalysisInputError(`--mask ${o.maskPath}: the store holds no analysis settings to judge against.`);
    mask = { ...readMaskFile(o.maskPath, settings.sampleRate / 2), sha256: fileSha256(o.maskPath) };
    const f = frequencies(settings);
    const limits = maskOnBins(mask, f);
    const binHz = settings.sampleRate / settings.segment;
    for (const i of d.incidents) {
      const sp = spectra.get(i.id);
      if (typeof sp === 'object') incidentMask.set(i.id, judgeMask(asdOf(sp.psd), limits, f, 1, f.length - 1));
    }
    for (const s of bandSeries) {
      if (mask.unit !== undefined && mask.unit !== s.unit)
        throw new AnalysisInputError(
          `--mask ${o.maskPath}: its limits are in ${mask.unit}/√Hz but channel ${s.channel} is in ${s.unit}/√Hz; give a mask in ${s.unit}/√Hz.`,
        );
      maskVerdicts.set(bandKey(s.channel, s.band!), bandVerdict(s, d.incidents, spectra, limits, f, binHz));
    }
  }
  return {
    rig: o.rig ?? null,
    baselineTimeline: timeline,
    settings,
    context,
    baseline,
    baselineBandRms,
    spectra,
    mask,
    maskVerdicts,
    incidentMask,
  };
}

function asdOf(psd: Float64Array): Float64Array {
  return psd.map(Math.sqrt);
}

function bandVerdict(
  s: ReportData['series'][number],
  incidents: ReportIncident[],
  spectra: Map<string, IncidentSpectrum | string>,
  limits: Float64Array,
  f: Float64Array,
  binHz: number,
): BandMaskVerdict | string {
  const r = bandBins(f.length, binHz, s.band![0], s.band![1]);
  const first = Math.max(1, r.first);
  let limitPower = 0;
  for (let k = first; k <= r.last; k++) {
    if (!(limits[k] > 0)) return 'the mask does not cover the whole band';
    limitPower += limits[k] * limits[k] * binHz;
  }
  const loudest = Math.max(...s.rows.filter((x) => !x.gap && x.max !== null).map((x) => x.max!));
  if (!(loudest > 0)) return 'no band RMS in the span';
  const bandMarginDb = 20 * Math.log10(Math.sqrt(limitPower) / loudest);
  let worstBin: BandMaskVerdict['worstBin'] = null;
  for (const i of incidents) {
    const sp = spectra.get(i.id);
    if (i.channel !== s.channel || typeof sp !== 'object') continue;
    const v = judgeMask(asdOf(sp.psd), limits, f, first, r.last);
    if (v.bins > 0 && (!worstBin || v.worstMarginDb < worstBin.marginDb))
      worstBin = { marginDb: v.worstMarginDb, frequency: v.worstFrequency, incident: i.id };
  }
  return { pass: bandMarginDb >= 0 && (!worstBin || worstBin.marginDb >= 0), bandMarginDb, worstBin };
}
