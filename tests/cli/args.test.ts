import { describe, expect, it } from 'vitest';
import { defineCommand, defineFlags, parseArgs, type CommandSpec } from '../../agent/cli/args.ts';
import { UsageError } from '../../agent/errors.ts';

const spec: CommandSpec = {
  name: 'analyze',
  summary: 'test spec',
  positionals: [{ name: 'FILE', help: 'a WAV file', required: true }],
  flags: [
    { name: 'segment', kind: 'number', integer: true, min: 64, max: 1 << 20, help: 'segment length' },
    { name: 'window', kind: 'string', help: 'window', default: 'hann' },
    { name: 'detrend', kind: 'string', choices: ['none', 'mean', 'linear'], default: 'mean', help: 'detrend' },
    { name: 'band', kind: 'list', value: 'LO:HI', help: 'band' },
    { name: 'json', kind: 'boolean', help: 'json output' },
  ],
  run: async () => 0,
};

describe('parseArgs', () => {
  it('reads flags, defaults, repeats and positionals', () => {
    const p = parseArgs(spec, ['x.wav', '--segment', '1024', '--band', '1:10', '--band=20:200', '--json']);
    expect(p.positionals).toEqual(['x.wav']);
    expect(p.flags).toMatchObject({
      segment: 1024,
      window: 'hann',
      detrend: 'mean',
      band: ['1:10', '20:200'],
      json: true,
    });
  });

  it('refuses an unknown flag naming it and the help', () => {
    expect(() => parseArgs(spec, ['x.wav', '--segmnet', '10'])).toThrow(/unknown flag --segmnet.*--help/);
  });

  it('refuses a bad number naming the flag and the range', () => {
    expect(() => parseArgs(spec, ['x.wav', '--segment', 'abc'])).toThrow(UsageError);
    expect(() => parseArgs(spec, ['x.wav', '--segment', '10'])).toThrow(/--segment 10 is out of range.*from 64/);
    expect(() => parseArgs(spec, ['x.wav', '--segment', '100.5'])).toThrow(/not an integer/);
  });

  it('refuses a value outside the choices and a missing value', () => {
    expect(() => parseArgs(spec, ['x.wav', '--detrend', 'quadratic'])).toThrow(/none, mean, linear/);
    expect(() => parseArgs(spec, ['x.wav', '--segment'])).toThrow(/needs a value/);
  });

  it('refuses missing and extra positionals', () => {
    expect(() => parseArgs(spec, [])).toThrow(/missing FILE/);
    expect(() => parseArgs(spec, ['a.wav', 'b.wav'])).toThrow(/unexpected argument 'b.wav'/);
  });
});

describe('typed flag tables', () => {
  // The types follow the declarations; tsc (npm run typecheck) checks the @ts-expect-error lines, and the values
  // are the command-line conventions of common practice (a repeated option collects, an absent one is unset).
  const typed = defineCommand({
    name: 'typed',
    summary: 'typed flags',
    positionals: [],
    flags: defineFlags([
      { name: 'rate', kind: 'number', help: 'no default' },
      { name: 'segment', kind: 'number', default: 4096, help: 'with a default' },
      { name: 'detrend', kind: 'string', choices: ['none', 'mean'], default: 'mean', help: 'choices' },
      { name: 'band', kind: 'list', help: 'repeatable' },
      { name: 'quiet', kind: 'boolean', help: 'switch' },
    ]),
    run: async () => 0,
  });

  it('gives numbers, choices, arrays and booleans, and undefined for an absent flag without a default', () => {
    const f = parseArgs(typed, ['--band', '1:2', '--band', '3:4', '--detrend', 'none']).flags;
    const rate: number | undefined = f.rate;
    const segment: number = f.segment;
    const detrend: 'none' | 'mean' = f.detrend;
    const band: string[] = f.band;
    const quiet: boolean = f.quiet;
    expect({ rate, segment, detrend, band, quiet }).toEqual({
      rate: undefined,
      segment: 4096,
      detrend: 'none',
      band: ['1:2', '3:4'],
      quiet: false,
    });
    // @ts-expect-error a flag without a default may be absent
    const mustBeNumber: number = f.rate;
    // @ts-expect-error no such flag in the table
    void f.nosuch;
    // @ts-expect-error only the declared choices
    const wrongChoice: 'linear' = f.detrend;
    void mustBeNumber;
    void wrongChoice;
  });

  it('keeps separate lists for two parses of the same table', () => {
    const a = parseArgs(typed, ['--band', '1:2']).flags.band;
    const b = parseArgs(typed, []).flags.band;
    expect(a).toEqual(['1:2']);
    expect(b).toEqual([]);
  });
});
