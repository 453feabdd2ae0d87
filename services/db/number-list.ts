/**
 * Parses a comma-separated list of decimal numbers (Postgres float text output) into `out`
 * starting at `offset`; an empty field is NaN (SQL NULL). Returns the count parsed.
 * Hand-written because `split` + `Number` allocates one string per value and is several times
 * slower on the hundreds of thousands of values of one vehicle's window.
 * @example parseNumberList('1.5,,-2', new Float64Array(3), 0) // 3 → [1.5, NaN, -2]
 */
export function parseNumberList(text: string, out: Float64Array, offset: number): number {
  const len = text.length;
  if (len === 0) return 0;
  let k = offset;
  let i = 0;
  while (i <= len) {
    const start = i;
    let c = i < len ? text.charCodeAt(i) : 44;
    if (c === 44) {
      out[k++] = NaN;
      i++;
      continue;
    }
    let negative = false;
    if (c === 45) {
      negative = true;
      c = text.charCodeAt(++i);
    }
    let value = 0;
    while (c >= 48 && c <= 57) {
      value = value * 10 + (c - 48);
      c = ++i < len ? text.charCodeAt(i) : 44;
    }
    let exact = true;
    if (c === 46) {
      let scale = 1;
      c = ++i < len ? text.charCodeAt(i) : 44;
      while (c >= 48 && c <= 57) {
        value = value * 10 + (c - 48);
        scale *= 10;
        c = ++i < len ? text.charCodeAt(i) : 44;
      }
      // digits / 10^k is one correctly rounded division (the same double as Number()) while the
      // digits fit in 2^53; longer fields go to Number() below.
      exact = value <= Number.MAX_SAFE_INTEGER;
      value /= scale;
    }
    if (c !== 44 || !exact) {
      // Exponent, 'NaN', 'Infinity' or too many digits: rare, so let Number() handle the field.
      let end = text.indexOf(',', i);
      if (end < 0) end = len;
      out[k++] = Number(text.slice(start, end));
      i = end + 1;
      continue;
    }
    out[k++] = negative ? -value : value;
    i++;
  }
  return k - offset;
}
