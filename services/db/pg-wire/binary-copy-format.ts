/** The file format of `COPY … (FORMAT binary)` (PostgreSQL documentation, "COPY", "Binary Format"). */

/** Binary COPY header: the 11-byte signature, 4 bytes of flags, 4 bytes of header extension length. */
export const COPY_SIGNATURE = Buffer.from('PGCOPY\n\xff\r\n\0', 'latin1');
export const HEADER_BYTES = 19;
/** timestamptz travels as int64 microseconds since 2000-01-01T00:00:00Z, here as two 32-bit halves. */
export const PG_EPOCH_MS = 946_684_800_000;
export const TWO_POW_32 = 4_294_967_296;
