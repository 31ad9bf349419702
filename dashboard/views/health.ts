// The health strip (source, rate, samples, gaps, CRC errors, dropped blocks, recording) and the replay banner.
import type { AgentStatus } from '../../protocol/messages.ts';
import { count, fixed } from '../format.ts';

export class HealthStrip {
  constructor(
    private readonly list: HTMLElement,
    private readonly banner: HTMLElement,
  ) {}

  update(s: AgentStatus): void {
    const items: [string, string, string, boolean][] = [
      ['source', 'source', s.source ? `${s.source.kind}: ${s.source.label}` : '—', false],
      ['rate', 'rate', s.sampleRate ? `${count(s.sampleRate)} S/s` : '—', false],
      ['samples', 'samples', count(s.samples), false],
      ['time', 't', `${fixed(s.t, 1)} s`, false],
      ['gaps', 'gaps', `${count(s.gaps)} (${count(s.lostSamples)} lost)`, s.gaps > 0],
      ['crc', 'CRC errors', count(s.crcErrors), s.crcErrors > 0],
      ['sync', 'link errors', count(s.syncErrors ?? 0), (s.syncErrors ?? 0) > 0],
      ['nonfinite', 'non-finite', count(s.nonfiniteFrames ?? 0), (s.nonfiniteFrames ?? 0) > 0],
      ['dropped', 'dropped blocks', count(s.droppedBlocks), s.droppedBlocks > 0],
      [
        'recording',
        'recording',
        s.recording.state === 'recording'
          ? `on → ${s.recording.file ?? ''}`
          : s.recording.state === 'failed'
            ? `FAILED: ${s.recording.error ?? ''}`
            : 'off',
        s.recording.state === 'failed',
      ],
    ];
    if (this.list.children.length !== items.length) {
      this.list.replaceChildren(
        ...items.map(([id]) => Object.assign(document.createElement('li'), { id: `health-${id}` })),
      );
    }
    items.forEach(([, label, value, bad], i) => {
      const li = this.list.children[i] as HTMLElement;
      const text = `<span>${label}</span>`;
      if (li.dataset.v !== value) {
        li.innerHTML = text;
        li.append(value);
        li.dataset.v = value;
      }
      li.classList.toggle('bad', bad);
    });
    const r = s.replay;
    if (r && s.sampleRate) {
      const pos = r.position / s.sampleRate;
      const dur = r.duration / s.sampleRate;
      this.banner.hidden = false;
      this.banner.textContent = `Replaying ${r.file} — position ${fixed(pos, 1)} s of ${fixed(dur, 1)} s at ${r.speed === 'max' ? 'maximum speed' : `${r.speed}×`}${r.loop ? ', looping' : ''}. Not live data.`;
    } else this.banner.hidden = true;
  }
}
