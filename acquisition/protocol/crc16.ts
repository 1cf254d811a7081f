/**
 * The line checksum of the Rateline protocol: CRC-16 with polynomial 0x1021, initial
 * value 0xFFFF, no reflection, no final XOR (the variant catalogued as CRC-16/CCITT-FALSE,
 * also called CRC-16/IBM-3740; check value of "123456789" is 0x29B1). A CRC catches every
 * single- and double-bit error and every burst up to 16 bits, which a plain XOR of the
 * bytes does not (two flipped bits in the same column cancel out).
 */

const TABLE = buildTable();

function buildTable(): Uint16Array {
  const table = new Uint16Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n << 8;
    for (let b = 0; b < 8; b++) c = c & 0x8000 ? ((c << 1) ^ 0x1021) & 0xffff : (c << 1) & 0xffff;
    table[n] = c;
  }
  return table;
}

/** CRC over the character codes of text[from, to) (each code taken as one byte). */
export function crc16(text: string, from = 0, to = text.length): number {
  let crc = 0xffff;
  for (let i = from; i < to; i++) {
    crc = ((crc << 8) & 0xffff) ^ TABLE[((crc >>> 8) ^ text.charCodeAt(i)) & 0xff]!;
  }
  return crc;
}

/** Four upper-case hex digits, zero padded. */
export function crc16Hex(text: string): string {
  return crc16(text).toString(16).toUpperCase().padStart(4, '0');
}
