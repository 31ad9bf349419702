// The expected-floor overlay from a noise budget the user enters, referred to the channel input (the unit the
// channel is calibrated in): source resistor Johnson noise sqrt(4kTR), amplifier voltage noise eₙ, amplifier
// current noise iₙ through the source resistance, and ADC quantisation q/sqrt(6·fs) divided by the gain ahead of
// the ADC; uncorrelated, so they add in quadrature (dsp/measure/noise-budget.ts).
import { quantizationDensity } from '../../dsp/noise-theory.ts';
import { budgetTerms, type BudgetTerms } from '../../dsp/measure/noise-budget.ts';
import { si } from '../format.ts';
import type { ChannelFront } from '../../protocol/front-end.ts';

export interface BudgetInputs {
  ohms: number;
  kelvin: number;
  enNv: number;
  inPa: number;
  bits: number;
  spanV: number;
  gain: number;
}

export type BudgetResult = BudgetTerms;

export function noiseBudget(b: BudgetInputs, sampleRate: number): BudgetResult {
  return budgetTerms({
    sourceOhms: b.ohms,
    kelvin: b.kelvin,
    amplifierDensity: b.enNv * 1e-9,
    amplifierCurrent: b.inPa * 1e-12,
    quantisation: quantizationDensity(b.spanV, b.bits, sampleRate),
    gain: b.gain,
  });
}

export class NoiseBudgetForm {
  constructor(
    private readonly form: HTMLFormElement,
    private readonly result: HTMLElement,
    private readonly onChange: (floor: number | null) => void,
  ) {
    form.addEventListener('input', () => this.recompute());
  }

  sampleRate = 0;
  private prefilled = false;

  /**
   * Fills the form from a channel's front end (rig config or recording sidecar) and shows the overlay: the budget
   * terms, the gain, and the converter from its step (bits = log2(2·full scale / step), span = step · 2^bits).
   */
  prefill(front: ChannelFront | undefined): void {
    const b = front?.budget;
    if (!b || this.prefilled) return; // once: a later settings change keeps what the user typed
    this.prefilled = true;
    const set = (id: string, v: number): void => {
      (this.form.querySelector(`#${id}`) as HTMLInputElement).value = String(v);
    };
    set('nb-r', b.sourceOhms);
    set('nb-t', b.kelvin);
    set('nb-en', b.amplifierDensity * 1e9);
    set('nb-in', b.amplifierCurrent * 1e12);
    if (front.gain !== undefined) set('nb-gain', front.gain);
    if (front.lsb !== undefined && front.fullScale !== undefined) {
      const bits = Math.round(Math.log2((2 * front.fullScale) / front.lsb));
      set('nb-bits', bits);
      set('nb-span', front.lsb * 2 ** bits);
    }
    (this.form.querySelector('#nb-show') as HTMLInputElement).checked = true;
  }

  private read(id: string): number {
    return Number((this.form.querySelector(`#${id}`) as HTMLInputElement).value);
  }

  recompute(): void {
    const show = (this.form.querySelector('#nb-show') as HTMLInputElement).checked;
    if (!this.sampleRate) return;
    const inputs: BudgetInputs = {
      ohms: this.read('nb-r'),
      kelvin: this.read('nb-t'),
      enNv: this.read('nb-en'),
      inPa: this.read('nb-in'),
      bits: this.read('nb-bits'),
      spanV: this.read('nb-span'),
      gain: this.read('nb-gain'),
    };
    try {
      if (!(inputs.gain > 0)) throw new RangeError('gain must be above 0');
      const r = noiseBudget(inputs, this.sampleRate);
      this.result.textContent = `total ${si(r.total, 'V/√Hz')} = √(${r.parts.map((p) => `${p.name} ${si(p.density, 'V/√Hz')}`).join('² + ')}²)`;
      this.onChange(show ? r.total : null);
    } catch (err) {
      this.result.textContent = (err as Error).message;
      this.onChange(null);
    }
  }
}
