// The front end the context message carries per channel, and the protocol's strict check of it.
import { describe, expect, it } from 'vitest';
import { channelFrontOf } from '../../agent/server/channel-front.ts';
import { channelFrontProblem } from '../../protocol/front-end.ts';
import { psdFactor, referralSuffix } from '../../dashboard/referral.ts';

const budget = { sourceOhms: 350, kelvin: 296, amplifierDensity: 6e-9, amplifierCurrent: 2e-13 };

describe('channel front end', () => {
  it('takes gain, budget and converter step from a recording sidecar; full scale at the ADC', () => {
    // The demo sidecar's bridge: 2.98e-7 V per count, 8 388 607 counts (24-bit two's complement peak, common practice).
    const f = channelFrontOf({
      name: 'bridge',
      unit: 'V',
      scale: 1,
      fullScaleCounts: 8388607 * 2.98e-7,
      frontEnd: { gain: 100, budget, lsb: 2.98e-7 },
    });
    expect(f).toEqual({ gain: 100, inputReferred: false, budget, lsb: 2.98e-7, fullScale: 8388607 * 2.98e-7 });
    expect(channelFrontProblem(f)).toBeNull();
  });

  it('input-referred samples (rig config) have the ADC full scale gain times the received one', () => {
    const f = channelFrontOf({
      name: 'a',
      unit: 'V',
      scale: 1e-6 / 50,
      fullScaleCounts: 1000,
      calibration: { unit: 'V', gain: 50, inputReferred: true },
    });
    expect(f?.inputReferred).toBe(true);
    expect(f?.fullScale).toBeCloseTo(1e-3, 15);
  });

  it('sends nothing for a channel with no front-end facts', () => {
    expect(channelFrontOf({ name: 'a', unit: 'V', scale: 1, fullScaleCounts: Infinity })).toBeUndefined();
  });

  it('refuses unknown keys, non-positive gains and a bad budget, naming the field', () => {
    expect(channelFrontProblem({ inputReferred: false, colour: 1 })).toMatch(/front\.colour/);
    expect(channelFrontProblem({ inputReferred: false, gain: 0 })).toMatch(/front\.gain/);
    expect(channelFrontProblem({ inputReferred: true })).toMatch(/needs front\.gain/);
    expect(channelFrontProblem({ inputReferred: false, budget: { ...budget, kelvin: -1 } })).toMatch(/budget\.kelvin/);
  });

  it('moves a PSD by gain² between the input and the ADC (a voltage gain G scales power by G², common practice)', () => {
    const adc = { gain: 100, inputReferred: false };
    expect(psdFactor(adc, 'input')).toBe(1e-4);
    expect(psdFactor(adc, 'adc')).toBe(1);
    expect(psdFactor({ gain: 100, inputReferred: true }, 'adc')).toBe(1e4);
    expect(psdFactor(undefined, 'input')).toBe(1);
    expect(referralSuffix(adc, 'input')).toBe(' (input)');
    expect(referralSuffix(undefined, 'input')).toBe('');
  });
});
