/** Stands for an NDJSON line or JSON array element that was not valid JSON: rejected with its index, not fatal. */
export const MALFORMED: unique symbol = Symbol('malformed');

/** A CSV row whose field count differs from the header's, or with an unclosed quote. */
export const MALFORMED_CSV: unique symbol = Symbol('malformed-csv');
