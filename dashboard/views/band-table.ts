// Band table: live RMS, baseline RMS, Δ dB, threshold and state per channel and band, updated in place.
import type { AlarmCondition, BandRow } from '../../protocol/messages.ts';
import { si, fixed, short } from '../format.ts';

const STATE_LABEL: Record<AlarmCondition, string> = {
  ok: 'ok',
  raised: 'ALARM',
  held: 'held: overload',
  'not-judged': 'not judged: lines',
  'no-baseline': 'no baseline',
};

export class BandTable {
  private readonly rows = new Map<string, HTMLTableRowElement>();

  constructor(private readonly body: HTMLTableSectionElement) {}

  /** `units` per channel: the unit label and the factor on amplitudes that refers them to the point shown. */
  update(
    bands: BandRow[],
    units: Map<string, { unit: string; amplitude: number }>,
    spectrumSample: number | null,
  ): void {
    this.body.dataset.sample = spectrumSample === null ? '' : String(spectrumSample);
    const keep = new Set<string>();
    for (const b of bands) {
      const key = `${b.channel}|${b.low}|${b.high}`;
      keep.add(key);
      let tr = this.rows.get(key);
      if (!tr) {
        tr = document.createElement('tr');
        tr.dataset.channel = b.channel;
        tr.dataset.band = `${b.low}-${b.high}`;
        for (let i = 0; i < 8; i++) tr.appendChild(document.createElement('td'));
        tr.cells[0].className = 'text';
        tr.cells[7].className = 'state';
        this.body.appendChild(tr);
        this.rows.set(key, tr);
      }
      const { unit, amplitude: k } = units.get(b.channel) ?? { unit: '', amplitude: 1 };
      const scaled = (v: number | null): number | null => (v === null ? null : v * k);
      const cells = [
        b.channel,
        `${short(b.low)}–${short(b.high)}`,
        si(b.rms * k, unit),
        si(scaled(b.baselineRms), unit),
        fixed(b.deltaDb, 2),
        fixed(b.thresholdDb, 2),
        si(scaled(b.floorDensity), `${unit}/√Hz`),
        STATE_LABEL[b.state],
      ];
      // Δ is the floor with narrow lines left out: when the whole-band RMS says otherwise, the row says so itself.
      const allBinsDb = b.baselineRms ? 20 * Math.log10(b.rms / b.baselineRms) : null;
      if (b.deltaDb !== null && allBinsDb !== null && allBinsDb - b.deltaDb > 1) {
        cells[4] = `${fixed(b.deltaDb, 2)} floor (${allBinsDb >= 0 ? '+' : ''}${fixed(allBinsDb, 1)} with lines)`;
      }
      if (b.state === 'not-judged') cells[7] = 'partly not judged: lines cover the band';
      for (let i = 0; i < 8; i++) if (tr.cells[i].textContent !== cells[i]) tr.cells[i].textContent = cells[i];
      // Exact figures for tests and for copying: the cell shows 3 significant figures.
      tr.cells[2].dataset.value = String(b.rms * k);
      tr.cells[3].dataset.value = b.baselineRms === null ? '' : String(b.baselineRms * k);
      tr.className = b.state === 'raised' ? 'raised' : '';
      tr.cells[7].classList.toggle('ok', b.state === 'ok');
    }
    for (const [key, tr] of this.rows) {
      if (!keep.has(key)) {
        tr.remove();
        this.rows.delete(key);
      }
    }
  }
}
