import net from 'node:net';

/** Bytes a connection receives into at a time (Node's own reads are 64 KiB too). */
const READ_BUFFER_BYTES = 64 * 1024;

/**
 * A socket for pg that receives into one buffer per connection (Node's `onread`) instead of a
 * fresh 64 KiB buffer for every read. A worker reading windows by binary COPY receives about 145 MB
 * per 2.4 million readings; as separate buffers, that external memory set off about ten full
 * garbage collections per fleet. pg gets a copy of each chunk as a 'data' event (it may keep
 * parts of one until the next arrives); a reader that takes over the connection while a COPY
 * runs (`worker/copy-out.ts`) sets `sink` and gets views into the buffer, valid during the call
 * only, with nothing copied.
 */
export class ReusedBufferSocket extends net.Socket {
  /** While set, receives each chunk in place of the 'data' listeners. */
  sink: ((chunk: Buffer) => void) | undefined;

  constructor() {
    // Node's net.Socket takes `onread` in its constructor; @types/node's SocketConstructorOpts
    // lacks it. Its callback runs only after the constructor, once `this` is set.
    const holder: { socket?: ReusedBufferSocket } = {};
    const buffer = Buffer.allocUnsafe(READ_BUFFER_BYTES);
    const onread = {
      buffer,
      callback: (bytes: number, into: Uint8Array) =>
        holder.socket!.received(Buffer.from(into.buffer, into.byteOffset, bytes)),
    };
    super({ onread } as net.SocketConstructorOpts);
    holder.socket = this;
  }

  /** Hands a chunk the sink took but does not want (the rest after its COPY) to pg's parser. */
  passOn(chunk: Buffer): void {
    if (chunk.length > 0) this.emit('data', Buffer.from(chunk));
  }

  private received(chunk: Buffer): void {
    if (this.sink) this.sink(chunk);
    else this.passOn(chunk);
  }
}

/**
 * pg's `stream` option: a `ReusedBufferSocket` for plain TCP; a plain socket when TLS is asked
 * for, where Node's TLS layer reads the socket itself.
 */
export function pgSocket(config?: { ssl?: unknown }): net.Socket {
  return config?.ssl ? new net.Socket() : new ReusedBufferSocket();
}
