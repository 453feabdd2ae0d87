import { COPY_DATA, type CopyDataSink, MESSAGE_HEADER_BYTES } from '../../services/db/pg-wire/copy-out.js';

/** A `CopyDataSink` that hands `payload` the bytes [start, end) of each CopyData message's payload. */
export function eachCopyData(
  payload: (bytes: Uint8Array, view: DataView, start: number, end: number) => void,
): CopyDataSink {
  return (bytes, view, start, end) => {
    let p = start;
    while (p + MESSAGE_HEADER_BYTES <= end && bytes[p] === COPY_DATA) {
      const next = p + 1 + view.getInt32(p + 1);
      if (next > end) break;
      payload(bytes, view, p + MESSAGE_HEADER_BYTES, next);
      p = next;
    }
    return p;
  };
}
