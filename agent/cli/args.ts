// Declarative flag parsing for the subcommands: every flag is declared once with its type and help,
// so unknown flags and bad values are refused with a message naming the flag and the fix.
import { UsageError } from '../errors.ts';

export type FlagKind = 'string' | 'number' | 'boolean' | 'list';

export interface FlagSpec {
  /** Long name without dashes, e.g. "segment". */
  name: string;
  kind: FlagKind;
  help: string;
  /** Placeholder in help, e.g. "N", "LO:HI". */
  value?: string;
  short?: string;
  /** For string flags: the allowed values. */
  choices?: readonly string[];
  /** For number flags: inclusive limits. */
  min?: number;
  max?: number;
  integer?: boolean;
  default?: string | number | boolean;
}

export interface PositionalSpec {
  name: string;
  help: string;
  required: boolean;
}

/** Any parsed flag value, for code that handles flags by name (the rig config overlay). */
export type FlagValue = string | number | boolean | string[] | undefined;

/** The value one flag parses to: repeatable flags are arrays, booleans default to false, and a string or number
 * flag without a default is undefined when it is not given. String flags with choices give their union. */
export type ValueOf<F extends FlagSpec> = string extends F['name']
  ? FlagValue
  : F['kind'] extends 'boolean'
    ? boolean
    : F['kind'] extends 'list'
      ? string[]
      : | (F['kind'] extends 'number'
            ? number
            : F extends { choices: readonly (infer C extends string)[] }
              ? C
              : string)
        | (F extends { default: string | number | boolean } ? never : undefined);

/** The parsed flags of a flag table, keyed by flag name, each typed from its declaration. */
export type FlagValues<S extends readonly FlagSpec[]> = { [K in S[number] as K['name']]: ValueOf<K> };

export interface ParsedArgs<S extends readonly FlagSpec[] = readonly FlagSpec[]> {
  flags: FlagValues<S>;
  positionals: string[];
  /** Flags written on the command line (the rest hold defaults, which a rig config may replace). */
  given?: Set<string>;
}

export interface CommandSpec<S extends readonly FlagSpec[] = readonly FlagSpec[]> {
  name: string;
  summary: string;
  /** Extra paragraphs for --help (examples, notes). */
  details?: string;
  flags: S;
  positionals: PositionalSpec[];
  run(args: ParsedArgs<S>): Promise<number>;
}

/** Declares a command so that its run() sees the flags typed from the table (`const` keeps the literal names). */
export function defineCommand<const S extends readonly FlagSpec[]>(spec: CommandSpec<S>): CommandSpec<S> {
  return spec;
}

/** Declares one shared flag with its literal name and kind kept. */
export function defineFlag<const F extends FlagSpec>(flag: F): F {
  return flag;
}

/** Declares a shared flag group with its literal names and kinds kept, for FlagValues. */
export function defineFlags<const S extends readonly FlagSpec[]>(flags: S): S {
  return flags;
}

function findFlag(spec: CommandSpec<readonly FlagSpec[]>, token: string): FlagSpec | undefined {
  if (token.startsWith('--')) return spec.flags.find((f) => f.name === token.slice(2));
  return spec.flags.find((f) => f.short !== undefined && `-${f.short}` === token);
}

function parseNumber(flag: FlagSpec, raw: string, command: string): number {
  const value = Number(raw);
  const what = flag.integer ? 'an integer' : 'a number';
  const range =
    flag.min !== undefined && flag.max !== undefined
      ? ` from ${flag.min} to ${flag.max}`
      : flag.min !== undefined
        ? ` ≥ ${flag.min}`
        : flag.max !== undefined
          ? ` ≤ ${flag.max}`
          : '';
  const fix = `give ${what}${range}, e.g. --${flag.name} ${flag.default ?? flag.min ?? 1}`;
  if (raw.trim() === '' || !Number.isFinite(value)) {
    throw new UsageError(`floorline ${command}: --${flag.name} got '${raw}', not ${what}; ${fix}.`);
  }
  if (flag.integer && !Number.isInteger(value)) {
    throw new UsageError(`floorline ${command}: --${flag.name} got ${raw}, not an integer; ${fix}.`);
  }
  if ((flag.min !== undefined && value < flag.min) || (flag.max !== undefined && value > flag.max)) {
    throw new UsageError(`floorline ${command}: --${flag.name} ${raw} is out of range; ${fix}.`);
  }
  return value;
}

/** Parses argv for one subcommand. Throws UsageError naming the offending flag and the fix. */
export function parseArgs<const S extends readonly FlagSpec[]>(
  spec: CommandSpec<S>,
  argv: readonly string[],
): ParsedArgs<S> {
  // Built by name at run time; the table's declarations (defaults, kinds) make it a FlagValues<S>.
  const flags: Record<string, string | number | boolean | string[]> = {};
  const lists: Record<string, string[]> = {};
  const positionals: string[] = [];
  const given = new Set<string>();
  for (const f of spec.flags) {
    if (f.kind === 'list') flags[f.name] = lists[f.name] = [];
    else if (f.default !== undefined) flags[f.name] = f.default;
    else if (f.kind === 'boolean') flags[f.name] = false;
  }
  for (let i = 0; i < argv.length; i++) {
    let token = argv[i];
    if (token === '--') {
      positionals.push(...argv.slice(i + 1));
      break;
    }
    if (!token.startsWith('-') || token === '-' || /^-\d/.test(token)) {
      positionals.push(token);
      continue;
    }
    let inline: string | undefined;
    const eq = token.indexOf('=');
    if (token.startsWith('--') && eq > 0) {
      inline = token.slice(eq + 1);
      token = token.slice(0, eq);
    }
    const flag = findFlag(spec, token);
    if (!flag) {
      const known = spec.flags.map((f) => `--${f.name}`).join(', ');
      throw new UsageError(
        `floorline ${spec.name}: unknown flag ${token}; known flags: ${known || '(none)'}. See \`floorline ${spec.name} --help\`.`,
      );
    }
    given.add(flag.name);
    if (flag.kind === 'boolean') {
      if (inline !== undefined && inline !== 'true' && inline !== 'false') {
        throw new UsageError(
          `floorline ${spec.name}: --${flag.name} takes no value (got '${inline}'); write just --${flag.name}.`,
        );
      }
      flags[flag.name] = inline !== 'false';
      continue;
    }
    const raw = inline ?? argv[++i];
    if (raw === undefined) {
      throw new UsageError(
        `floorline ${spec.name}: --${flag.name} needs a value${flag.value ? ` (${flag.value})` : ''}; e.g. --${flag.name} ${flag.default ?? flag.value ?? 'VALUE'}.`,
      );
    }
    if (flag.kind === 'number') flags[flag.name] = parseNumber(flag, raw, spec.name);
    else if (flag.kind === 'list') lists[flag.name].push(raw);
    else {
      if (flag.choices && !flag.choices.includes(raw)) {
        throw new UsageError(
          `floorline ${spec.name}: --${flag.name} '${raw}' is not one of ${flag.choices.join(', ')}; pick one of those.`,
        );
      }
      flags[flag.name] = raw;
    }
  }
  const required = spec.positionals.filter((p) => p.required);
  if (positionals.length < required.length) {
    const missing = required[positionals.length];
    throw new UsageError(
      `floorline ${spec.name}: missing ${missing.name} (${missing.help}). See \`floorline ${spec.name} --help\`.`,
    );
  }
  if (positionals.length > spec.positionals.length) {
    throw new UsageError(
      `floorline ${spec.name}: unexpected argument '${positionals[spec.positionals.length]}'; ` +
        `this command takes ${spec.positionals.length === 0 ? 'no arguments' : spec.positionals.map((p) => p.name).join(' ')}.`,
    );
  }
  return { flags: flags as FlagValues<S>, positionals, given };
}

export function formatHelp(spec: CommandSpec): string {
  const pos = spec.positionals.map((p) => (p.required ? p.name : `[${p.name}]`)).join(' ');
  const lines = [`usage: floorline ${spec.name}${pos ? ' ' + pos : ''} [flags]`, '', spec.summary, ''];
  for (const p of spec.positionals) lines.push(`  ${p.name.padEnd(24)} ${p.help}`);
  if (spec.flags.length) lines.push('', 'flags:');
  for (const f of spec.flags) {
    const head = `--${f.name}${f.value ? ' ' + f.value : ''}${f.short ? `, -${f.short}` : ''}`;
    const extra = [
      f.choices ? `one of ${f.choices.join('|')}` : '',
      f.default !== undefined && f.kind !== 'boolean' ? `default ${f.default}` : '',
      f.kind === 'list' ? 'repeatable' : '',
    ]
      .filter(Boolean)
      .join('; ');
    lines.push(`  ${head.padEnd(24)} ${f.help}${extra ? ` (${extra})` : ''}`);
  }
  lines.push(`  ${'--help'.padEnd(24)} show this help`);
  if (spec.details) lines.push('', spec.details);
  return lines.join('\n') + '\n';
}
