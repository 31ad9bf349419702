// `floorline repair FILE`: fixes the header of a recording left by a crash (see agent/wav/FORMAT.md).
import { defineCommand } from '../args.ts';
import { repairWav } from '../../wav/repair.ts';

export const repairCommand = defineCommand({
  name: 'repair',
  summary: 'fix the header sizes of a WAV recording cut off by a crash, keeping every whole frame on disk',
  details: [
    'The data chunk is taken to run to the end of the file (as floorline writes recordings), cut to whole frames,',
    'and the RIFF, data and fact sizes rewritten (RF64 past 4 GiB). A file that needs nothing is left untouched.',
    'Example: floorline repair floorline-data/recordings/rig-20261201T220000Z.wav',
  ].join('\n'),
  positionals: [{ name: 'FILE', help: 'WAV recording to repair in place', required: true }],
  flags: [] as const,
  async run(args) {
    const r = await repairWav(args.positionals[0]);
    const what = r.changed
      ? `repaired: ${r.frames} frames (header said ${r.declaredBefore} data bytes${r.droppedBytes ? `; ${r.droppedBytes} bytes of a torn last frame cut` : ''}), ${r.container}`
      : `nothing to repair: ${r.frames} frames, ${r.container}`;
    process.stdout.write(`${r.path}: ${what}\n`);
    return 0;
  },
});
