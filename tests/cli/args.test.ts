import { describe, expect, it } from 'vitest';
import { parseArgs, type CommandSpec } from '../../agent/cli/args.ts';
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
