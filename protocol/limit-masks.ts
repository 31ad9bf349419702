// The limit masks the live limit rule judges, as the dashboard draws them: per channel the mask's points (Hz and
// density limit, log-log interpolated between them as dsp/measure/limit-mask.ts does), the unit of the limit and
// the point it is referred to (where the channel's samples arrive: the amplifier input when the rig config divided
// them by the gain, else the ADC). Sent after hello and again when the stream's channels change.
import { MAX_NAME_LENGTH, hasControlCharacters } from './limits.ts';

/** Points of one mask: a datasheet or test-spec limit has tens; this bounds what a page accepts. */
export const MAX_MASK_POINTS = 10_000;

export interface ChannelLimitMask {
  channel: string;
  /** Base unit of the limit (the limit is in unit/√Hz). */
  unit: string;
  referredTo: 'input' | 'adc';
  /** Strictly increasing, > 0, Hz. */
  frequency: number[];
  /** > 0, unit/√Hz, one per frequency. */
  limit: number[];
  /** The mask file's name (no folders), for the label. */
  file?: string;
}

export interface LimitMasksMessage {
  type: 'masks';
  masks: ChannelLimitMask[];
}

const KEYS = ['channel', 'unit', 'referredTo', 'frequency', 'limit', 'file'];

function nameProblem(v: unknown, what: string): string | null {
  if (typeof v !== 'string' || v === '' || v.length > MAX_NAME_LENGTH || hasControlCharacters(v))
    return `${what} must be a name of 1–${MAX_NAME_LENGTH} printable characters`;
  return null;
}

/** Null when `x` is a valid masks message, else what is wrong with it (strict: no unknown keys). */
export function limitMasksProblem(x: unknown): string | null {
  if (typeof x !== 'object' || x === null || Array.isArray(x)) return 'masks message must be an object';
  const o = x as Record<string, unknown>;
  if (o.type !== 'masks') return "masks message needs type 'masks'";
  for (const k of Object.keys(o)) if (k !== 'type' && k !== 'masks') return `masks message: ${k} is not a known key`;
  if (!Array.isArray(o.masks)) return 'masks must be an array';
  const seen = new Set<string>();
  for (let i = 0; i < o.masks.length; i++) {
    const p = `masks[${i}]`;
    const m = o.masks[i] as Record<string, unknown>;
    if (typeof m !== 'object' || m === null || Array.isArray(m)) return `${p} must be an object`;
    for (const k of Object.keys(m)) if (!KEYS.includes(k)) return `${p}.${k} is not a known key`;
    const bad = nameProblem(m.channel, `${p}.channel`) ?? nameProblem(m.unit, `${p}.unit`);
    if (bad) return bad;
    if (seen.has(m.channel as string)) return `${p}.channel ${m.channel as string} has a mask already`;
    seen.add(m.channel as string);
    if (m.referredTo !== 'input' && m.referredTo !== 'adc') return `${p}.referredTo must be 'input' or 'adc'`;
    if (m.file !== undefined && (typeof m.file !== 'string' || m.file.length > 255 || /[/\\]/.test(m.file)))
      return `${p}.file must be a file name without folders`;
    const f = m.frequency;
    const l = m.limit;
    if (!Array.isArray(f) || f.length < 1 || f.length > MAX_MASK_POINTS)
      return `${p}.frequency must be an array of 1–${MAX_MASK_POINTS} numbers`;
    if (!Array.isArray(l) || l.length !== f.length) return `${p}.limit must have one number per frequency`;
    for (let k = 0; k < f.length; k++) {
      const fk = f[k] as unknown;
      const lk = l[k] as unknown;
      if (typeof fk !== 'number' || !Number.isFinite(fk) || fk <= 0) return `${p}.frequency[${k}] must be above 0 Hz`;
      if (k > 0 && !(fk > (f[k - 1] as number))) return `${p}.frequency[${k}] must be above the one before`;
      if (typeof lk !== 'number' || !Number.isFinite(lk) || lk <= 0) return `${p}.limit[${k}] must be above 0`;
    }
  }
  return null;
}
