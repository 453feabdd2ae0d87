/** Value of one hex digit's character code, or -1. */
function hexDigit(c: number): number {
  if (c >= 48 && c <= 57) return c - 48; // 0-9
  const lower = c | 0x20;
  if (lower >= 97 && lower <= 102) return lower - 87; // a-f
  return -1;
}

/** Longest data field of a classic CAN frame, bytes (also the largest OBD-II response we accept). */
export const MAX_FRAME_BYTES = 8;

/**
 * Parses hex text ("7B FF 00", "7bff00", "0x7B 0xFF") into `out`, returning the number of bytes,
 * -1 for a character that is not hex or an odd digit count, -2 for more than `out.length` bytes.
 * Spaces, tabs, ':' and '-' between bytes are allowed; so is a "0x" before each byte.
 * @example parseHexBytes('41 05 7B', new Uint8Array(8)) // 3
 */
export function parseHexBytes(text: string, out: Uint8Array): number {
  let n = 0;
  let i = 0;
  const len = text.length;
  while (i < len) {
    const c = text.charCodeAt(i);
    if (c === 32 || c === 9 || c === 58 || c === 45) {
      i++;
      continue;
    }
    if (c === 48 && i + 1 < len && (text.charCodeAt(i + 1) | 0x20) === 120) {
      i += 2;
      continue;
    }
    if (i + 1 >= len) return -1;
    const hi = hexDigit(c);
    const lo = hexDigit(text.charCodeAt(i + 1));
    if (hi < 0 || lo < 0) return -1;
    if (n >= out.length) return -2;
    out[n++] = (hi << 4) | lo;
    i += 2;
  }
  return n;
}

/**
 * Parses a hex number ("18FEEE00", "0x18FEEE00", spaces around allowed) of at most 8 digits;
 * NaN when it is not one.
 * @example parseHexNumber('0x18FEEE00') // 419360256
 */
export function parseHexNumber(text: string): number {
  let i = 0;
  let len = text.length;
  while (i < len && text.charCodeAt(i) === 32) i++;
  while (len > i && text.charCodeAt(len - 1) === 32) len--;
  if (len - i >= 2 && text.charCodeAt(i) === 48 && (text.charCodeAt(i + 1) | 0x20) === 120) i += 2;
  if (len - i < 1 || len - i > 8) return NaN;
  let v = 0;
  for (; i < len; i++) {
    const d = hexDigit(text.charCodeAt(i));
    if (d < 0) return NaN;
    v = v * 16 + d;
  }
  return v;
}
