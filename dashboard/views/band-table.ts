// Band table: live RMS, baseline RMS, Δ dB, threshold and state per channel and band, updated in place.
import type { AlarmCondition, BandRow } from '../../protocol/messages.ts';
import { si, fixed, short } from '../format.ts';
import { formatAmplitude, formatDensity, fromPsd, type DensityUnit } from '../units.ts';

/**
 * How a channel's band figures are shown: its unit label (naming the point), the factor on amplitudes that refers
 * them there (and, for dBFS or LSB, scales them re the converter), and the unit chosen for the spectrum.
 */
export interface BandUnits {
  unit: string;
  amplitude: number;
  shown: DensityUnit;
}

/** RMS and floor density in the channel unit, or re the converter when dBFS or LSB is shown. */
function figures(u: BandUnits): {
  rms: (v: number | null) => string;
  density: (v: number) => string;
  exact: (v: number) => number;
} {
  if (u.shown === 'dbfs' || u.shown === 'lsb') {
    const amp = (v: number): number => fromPsd(u.shown, v * v) ?? NaN;
    return {
      rms: (v) => (v === null ? '—' : formatAmplitude(u.shown, v, u.unit, si)),
      density: (v) => (v > 0 ? formatDensity(u.shown, amp(v), u.unit, si) : '—'),
      exact: amp,
    };
  }
  return { rms: (v) => si(v, u.unit), density: (v) => si(v, `${u.unit}/√Hz`), exact: (v) => v };
}

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

  /** `units` per channel: the unit label, the factor on amplitudes for the point shown, and the unit chosen. */
  update(bands: BandRow[], units: Map<string, BandUnits>, spectrumSample: number | null): void {
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
      const u = units.get(b.channel) ?? { unit: '', amplitude: 1, shown: 'asd' };
      const k = u.amplitude;
      const show = figures(u);
      const scaled = (v: number | null): number | null => (v === null ? null : v * k);
      const cells = [
        b.channel,
        `${short(b.low)}–${short(b.high)}`,
        show.rms(b.rms * k),
        show.rms(scaled(b.baselineRms)),
        fixed(b.deltaDb, 2),
        fixed(b.thresholdDb, 2),
        show.density(b.floorDensity * k),
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
      tr.cells[2].dataset.value = String(show.exact(b.rms * k));
      tr.cells[3].dataset.value = b.baselineRms === null ? '' : String(show.exact(b.baselineRms * k));
      tr.cells[6].dataset.value = String(show.exact(b.floorDensity * k));
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
