import { BadRequestError, PayloadTooLargeError } from '../errors.js';
import { MALFORMED } from './malformed-record.js';

/** What the scanner found: a top-level field other than `readings`, or one element of it. */
export type JsonBatchEvent = { type: 'field'; key: string; value: unknown } | { type: 'reading'; value: unknown };

const enum State {
  BeforeRoot,
  ExpectKeyOrEnd,
  InKey,
  ExpectColon,
  ExpectValue,
  InValue,
  ExpectCommaOrEnd,
  ArrayExpectElementOrEnd,
  ArrayInElement,
  ArrayExpectCommaOrEnd,
  Done,
}

/**
 * Longest single value the scanner holds (a reading, a field or a field name), characters. As long
 * as the largest body parsed whole, so the two ways of reading a body accept the same values; it
 * keeps one endless value from being held in memory up to the body limit.
 */
export const MAX_VALUE_CHARS = 1 << 20;

function isSpace(c: number): boolean {
  return c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09;
}

/**
 * Incremental scanner for `{ "unit": "C", "readings": [ {...}, {...} ] }` that hands out each
 * element of `readings` as soon as it is complete, so a large batch is never held in memory
 * whole. Elements and other field values are parsed with JSON.parse; the scanner only finds
 * their boundaries (strings, escapes and nesting).
 */
export class JsonBatchScanner {
  private state = State.BeforeRoot;
  private buf = '';
  private key = '';
  private depth = 0;
  private inString = false;
  private escaped = false;
  /** Elements of `readings` completed so far. */
  private readings = 0;
  /** True once the `readings` field has been met. */
  sawReadings = false;

  /** `arrayKey`: the field whose elements are handed out (`frames`, `responses` for bus data). */
  constructor(private readonly arrayKey = 'readings') {}

  /** Feeds a chunk of text; returns the events completed by it. */
  push(chunk: string): JsonBatchEvent[] {
    const events: JsonBatchEvent[] = [];
    let i = 0;
    const n = chunk.length;
    while (i < n) {
      const c = chunk.charCodeAt(i);
      switch (this.state) {
        case State.BeforeRoot:
          if (c === 0x7b /* { */) this.state = State.ExpectKeyOrEnd;
          else if (!isSpace(c) && c !== 0xfeff)
            this.fail(`the body must be a JSON object with a "${this.arrayKey}" array`);
          i++;
          break;
        case State.ExpectKeyOrEnd:
          if (c === 0x22 /* " */) {
            this.state = State.InKey;
            this.buf = '"';
            this.escaped = false;
          } else if (c === 0x7d /* } */) this.state = State.Done;
          else if (c === 0x2c /* , */ && this.key !== '') {
            // separator after a value: handled by ExpectCommaOrEnd; a stray comma here is an error
            this.fail('unexpected "," in the JSON object');
          } else if (!isSpace(c)) this.fail('expected a field name in the JSON object');
          i++;
          break;
        case State.InKey: {
          const start = i;
          while (i < n) {
            const k = chunk.charCodeAt(i);
            i++;
            if (this.escaped) this.escaped = false;
            else if (k === 0x5c) this.escaped = true;
            else if (k === 0x22) {
              this.buf += chunk.slice(start, i);
              this.key = this.parseFieldName(this.buf);
              this.buf = '';
              this.state = State.ExpectColon;
              break;
            }
          }
          if (this.state === State.InKey) {
            this.buf += chunk.slice(start, i);
            if (this.buf.length > MAX_VALUE_CHARS) this.tooLong();
          }
          break;
        }
        case State.ExpectColon:
          if (c === 0x3a) this.state = State.ExpectValue;
          else if (!isSpace(c)) this.fail('expected ":" after a field name');
          i++;
          break;
        case State.ExpectValue:
          if (isSpace(c)) {
            i++;
          } else if (this.key === this.arrayKey) {
            if (c !== 0x5b /* [ */) this.fail(`"${this.arrayKey}" must be an array`);
            this.sawReadings = true;
            this.state = State.ArrayExpectElementOrEnd;
            i++;
          } else {
            this.startValue();
            this.state = State.InValue;
          }
          break;
        case State.InValue:
        case State.ArrayInElement: {
          const start = i;
          let ended = false;
          while (i < n) {
            const k = chunk.charCodeAt(i);
            if (this.inString) {
              if (this.escaped) this.escaped = false;
              else if (k === 0x5c) this.escaped = true;
              else if (k === 0x22) this.inString = false;
            } else if (k === 0x22) this.inString = true;
            else if (k === 0x7b || k === 0x5b) this.depth++;
            else if (k === 0x7d || k === 0x5d) {
              if (this.depth === 0) {
                ended = true; // closes the enclosing object/array: the value ended before it
                break;
              }
              this.depth--;
              if (this.depth === 0) {
                i++;
                ended = true;
                break;
              }
            } else if (k === 0x2c && this.depth === 0) {
              ended = true;
              break;
            }
            i++;
          }
          this.buf += chunk.slice(start, i);
          if (this.buf.length > MAX_VALUE_CHARS) this.tooLong();
          if (ended) this.finishValue(events);
          break;
        }
        case State.ExpectCommaOrEnd:
          if (c === 0x2c) this.state = State.ExpectKeyOrEnd;
          else if (c === 0x7d) this.state = State.Done;
          else if (!isSpace(c)) this.fail('expected "," or "}" in the JSON object');
          i++;
          break;
        case State.ArrayExpectElementOrEnd:
          if (isSpace(c)) i++;
          else if (c === 0x5d /* ] */) {
            this.state = State.ExpectCommaOrEnd;
            i++;
          } else {
            this.startValue();
            this.state = State.ArrayInElement;
          }
          break;
        case State.ArrayExpectCommaOrEnd:
          if (c === 0x2c) this.state = State.ArrayExpectElementOrEnd;
          else if (c === 0x5d) this.state = State.ExpectCommaOrEnd;
          else if (!isSpace(c)) this.fail('expected "," or "]" between readings');
          i++;
          break;
        case State.Done:
          if (!isSpace(c)) this.fail('unexpected text after the JSON object');
          i++;
          break;
      }
    }
    return events;
  }

  /** Call at the end of the body; throws if the object was not complete. */
  end(): void {
    if (this.state !== State.Done) this.fail('the JSON body ended early (incomplete object)');
  }

  private startValue(): void {
    this.buf = '';
    this.depth = 0;
    this.inString = false;
    this.escaped = false;
  }

  private finishValue(events: JsonBatchEvent[]): void {
    const text = this.buf.trim();
    this.buf = '';
    if (this.state === State.ArrayInElement) {
      let value: unknown;
      try {
        value = JSON.parse(text);
      } catch {
        value = MALFORMED;
      }
      events.push({ type: 'reading', value });
      this.readings++;
      this.state = State.ArrayExpectCommaOrEnd;
    } else {
      let value: unknown;
      try {
        value = JSON.parse(text);
      } catch {
        this.fail(`field "${this.key}" is not valid JSON`);
      }
      events.push({ type: 'field', key: this.key, value });
      this.state = State.ExpectCommaOrEnd;
    }
  }

  private parseFieldName(text: string): string {
    try {
      return JSON.parse(text) as string;
    } catch {
      this.fail(`a field name is not a valid JSON string (bad escape or control character): ${text.slice(0, 40)}`);
    }
  }

  private tooLong(): never {
    const what =
      this.state === State.ArrayInElement
        ? `reading ${this.readings}`
        : this.state === State.InKey
          ? 'a field name'
          : `field "${this.key}"`;
    throw new PayloadTooLargeError(
      `${what} is longer than ${MAX_VALUE_CHARS} characters; nothing was stored`,
      'value_too_long',
    );
  }

  private fail(message: string): never {
    throw new BadRequestError(`malformed JSON body: ${message}`, 'malformed_body');
  }
}
