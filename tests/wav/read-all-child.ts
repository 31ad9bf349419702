// Child process for the memory test: streams a WAV through WavReader and reports frames and peak RSS growth.
import { WavReader } from '../../agent/wav/reader.ts';

const path = process.argv[2];
const before = process.memoryUsage().rss;
let peak = before;
const reader = await WavReader.open(path, { blockFrames: 65536 });
let frames = 0;
let sum = 0;
for (let b = await reader.read(); b; b = await reader.read()) {
  frames += b.frames;
  sum += b.data[0][b.frames - 1];
  const rss = process.memoryUsage().rss;
  if (rss > peak) peak = rss;
}
await reader.close();
process.stdout.write(JSON.stringify({ frames, sum, growthBytes: peak - before }) + '\n');
