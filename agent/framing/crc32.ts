// CRC-32/ISO-HDLC (the CRC of Ethernet, zlib and PNG): reflected polynomial 0x04C11DB7 (0xEDB88320 reflected),
// init 0xFFFFFFFF, final XOR 0xFFFFFFFF. Parameters and check value from Greg Cook's "Catalogue of parametrised
// CRC algorithms" (reveng), entry CRC-32/ISO-HDLC: check = 0xCBF43926 over the ASCII bytes "123456789".
// Slicing-by-4 table form (Intel, Kounavis & Berry 2005): four table look-ups per 32-bit word.

const TABLES = makeTables();

function makeTables(): Uint32Array {
  const t = new Uint32Array(4 * 256);
  for (let i = 0; i < 256; i++) {
    let c = i;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[i] = c >>> 0;
  }
  for (let i = 0; i < 256; i++) {
    let c = t[i];
    for (let s = 1; s < 4; s++) {
      c = t[c & 0xff] ^ (c >>> 8);
      t[s * 256 + i] = c >>> 0;
    }
  }
  return t;
}

/** CRC-32/ISO-HDLC of bytes[start..end). Returns an unsigned 32-bit value. */
export function crc32(bytes: Uint8Array, start = 0, end = bytes.length): number {
  const t = TABLES;
  let c = 0xffffffff;
  let i = start;
  const end4 = end - ((end - start) & 3);
  for (; i < end4; i += 4) {
    c ^= bytes[i] | (bytes[i + 1] << 8) | (bytes[i + 2] << 16) | (bytes[i + 3] << 24);
    c = t[768 + (c & 0xff)] ^ t[512 + ((c >>> 8) & 0xff)] ^ t[256 + ((c >>> 16) & 0xff)] ^ t[c >>> 24];
  }
  for (; i < end; i++) c = t[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
