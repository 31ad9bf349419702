// The header fields that change as a WAV file grows, as (offset, bytes) patches: RIFF size, data size, the fact
// sample count and, past 4 GiB, the RF64 form with its ds64 chunk (EBU Tech 3306: 32-bit fields become
// 0xFFFFFFFF and the true sizes go in ds64, which replaces a JUNK chunk reserved at offset 12).
export interface SizeFields {
  /** Offset of the body of the JUNK/ds64 chunk at 12, or -1 when the file has none. */
  ds64Offset: number;
  /** Offset of the data chunk's 32-bit size field. */
  dataSizeOffset: number;
  /** Offset of the fact chunk body, or -1. */
  factOffset: number;
  /** File offset of the first data byte. */
  dataOffset: number;
}

export interface Patch {
  offset: number;
  bytes: Uint8Array;
}

const U32_MAX = 0xffffffff;

function u32(value: number): Uint8Array {
  const b = new Uint8Array(4);
  new DataView(b.buffer).setUint32(0, value, true);
  return b;
}

function ascii(s: string): Uint8Array {
  return Uint8Array.from(s, (ch) => ch.charCodeAt(0));
}

/**
 * Patches for `dataBytes` of samples (`frames` frames). RF64 is used when `rf64` is set or the RIFF size would
 * pass `rf64Above`; returns null when that is needed but the file has no room reserved for ds64.
 */
export function sizePatches(
  f: SizeFields,
  dataBytes: number,
  frames: number,
  rf64: boolean,
  rf64Above = U32_MAX,
): { rf64: boolean; patches: Patch[] } | null {
  const riffSize = f.dataOffset - 8 + dataBytes + (dataBytes & 1);
  const useRf64 = rf64 || riffSize > rf64Above;
  const patches: Patch[] = [];
  if (useRf64) {
    if (f.ds64Offset !== 20) return null;
    const ds64 = new Uint8Array(28);
    const v = new DataView(ds64.buffer);
    v.setBigUint64(0, BigInt(riffSize), true);
    v.setBigUint64(8, BigInt(dataBytes), true);
    v.setBigUint64(16, BigInt(frames), true);
    v.setUint32(24, 0, true); // no table entries
    patches.push({ offset: 0, bytes: ascii('RF64') }, { offset: 4, bytes: u32(U32_MAX) });
    patches.push({ offset: 12, bytes: ascii('ds64') }, { offset: 20, bytes: ds64 });
    patches.push({ offset: f.dataSizeOffset, bytes: u32(U32_MAX) });
  } else {
    patches.push({ offset: 4, bytes: u32(riffSize) }, { offset: f.dataSizeOffset, bytes: u32(dataBytes) });
  }
  if (f.factOffset >= 0) patches.push({ offset: f.factOffset, bytes: u32(Math.min(frames, U32_MAX)) });
  return { rf64: useRf64, patches };
}
