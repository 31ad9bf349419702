// Public surface of the WAV layer (reader for replay/analyze, crash-safe writer for the recorder).
export {
  WavReader,
  readWavFile,
  type WavBlock,
  type WavChannel,
  type WavInfo,
  type WavReaderOptions,
} from './reader.ts';
export { WavWriter, type WavWriterMetadata, type WavWriterOptions } from './writer.ts';
export { repairWav, type RepairResult } from './repair.ts';
export { WavError, type WavErrorCode } from './errors.ts';
export {
  METADATA_CHUNK_ID,
  METADATA_SCHEMA,
  sidecarPath,
  type ChannelMetadata,
  type RecordingMetadata,
} from './metadata.ts';
