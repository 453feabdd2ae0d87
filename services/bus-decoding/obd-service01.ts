import { CH_AMBIENT, CH_BAROMETRIC, CH_COOLANT, CH_RPM, CH_SPEED } from './bus-channels.js';

/** First byte of a positive response to service 01 (SAE J1979: request service + 0x40). */
export const SERVICE_01_POSITIVE = 0x41;
/** First byte of a negative response (ISO 14229 / ISO 15765-4 0x7F). */
export const NEGATIVE_RESPONSE = 0x7f;

/**
 * Longest service 01 response accepted, bytes: a request names at most 6 PIDs (SAE J1979, from
 * memory), each answered with at most 4 data bytes, after the 0x41: 1 + 6 · 5 = 31. Longer than a
 * CAN frame: the gateway reassembles the ISO 15765-2 multi-frame response.
 */
export const MAX_OBD_RESPONSE_BYTES = 31;

export const PID_COOLANT = 0x05;
export const PID_RPM = 0x0c;
export const PID_SPEED = 0x0d;
export const PID_BAROMETRIC = 0x33;
export const PID_AMBIENT = 0x46;

/**
 * Data bytes per PID (SAE J1979 / ISO 15031-5 service 01), for walking a response that carries
 * several PIDs: the five decoded here plus common ones a gateway asks for alongside, so their
 * bytes can be skipped. A PID not listed ends the walk (its length is unknown). Lengths of the
 * skipped PIDs are from memory.
 */
const PID_BYTES = new Map<number, number>([
  [0x00, 4],
  [0x20, 4],
  [0x40, 4],
  [0x60, 4],
  [0x80, 4],
  [0xa0, 4],
  [0xc0, 4], // supported-PID bitmaps
  [0x01, 4],
  [0x03, 2],
  [0x04, 1],
  [PID_COOLANT, 1],
  [0x06, 1],
  [0x07, 1],
  [0x0b, 1],
  [PID_RPM, 2],
  [PID_SPEED, 1],
  [0x0e, 1],
  [0x0f, 1],
  [0x10, 2],
  [0x11, 1],
  [0x1f, 2],
  [0x21, 2],
  [0x2f, 1],
  [0x31, 2],
  [PID_BAROMETRIC, 1],
  [0x42, 2],
  [PID_AMBIENT, 1],
  [0x5c, 1],
]);

export interface ObdDecodeResult {
  /** Bit mask of the channels set in `values`. */
  mask: number;
  /** PIDs in the response that were skipped (known length, not decoded) or ended the walk (unknown). */
  ignoredPids: number;
  /** A reason when the response is not a service 01 positive response or is cut short; else null. */
  error: string | null;
}

/**
 * Decodes a service 01 positive response (`41 PID A [B] PID A …`) into `values` by channel:
 * 0x05 coolant A − 40 °C, 0x46 ambient A − 40 °C, 0x0C engine speed (256A + B)/4 rpm,
 * 0x0D vehicle speed A km/h, 0x33 barometric pressure A kPa (SAE J1979).
 * @example decodeObdResponse(Uint8Array.of(0x41, 0x05, 0x7b), 3, values) // { mask: 1, … }; values[0] = 83
 */
export function decodeObdResponse(
  data: Uint8Array,
  length: number,
  values: Float64Array,
  result: ObdDecodeResult,
): ObdDecodeResult {
  result.mask = 0;
  result.ignoredPids = 0;
  result.error = null;
  if (length < 1) {
    result.error = 'data is empty';
    return result;
  }
  if (data[0] === NEGATIVE_RESPONSE) {
    result.error = 'a negative response (0x7F): the vehicle did not answer the request';
    return result;
  }
  if (data[0] !== SERVICE_01_POSITIVE) {
    result.error = `not a service 01 positive response: the first byte must be 0x41, got 0x${data[0]!.toString(16).padStart(2, '0')}`;
    return result;
  }
  if (length < 3) {
    result.error = 'a service 01 response needs at least a PID and one data byte';
    return result;
  }
  let i = 1;
  while (i < length) {
    const pid = data[i]!;
    const bytes = PID_BYTES.get(pid);
    if (bytes === undefined) {
      result.ignoredPids++;
      break;
    }
    if (i + 1 + bytes > length) {
      result.error = `PID 0x${pid.toString(16).padStart(2, '0')} needs ${bytes} data byte${bytes > 1 ? 's' : ''}, the response ends first`;
      return result;
    }
    const a = data[i + 1]!;
    switch (pid) {
      case PID_COOLANT:
        values[CH_COOLANT] = a - 40;
        result.mask |= 1 << CH_COOLANT;
        break;
      case PID_AMBIENT:
        values[CH_AMBIENT] = a - 40;
        result.mask |= 1 << CH_AMBIENT;
        break;
      case PID_RPM:
        values[CH_RPM] = (256 * a + data[i + 2]!) / 4;
        result.mask |= 1 << CH_RPM;
        break;
      case PID_SPEED:
        values[CH_SPEED] = a;
        result.mask |= 1 << CH_SPEED;
        break;
      case PID_BAROMETRIC:
        values[CH_BAROMETRIC] = a;
        result.mask |= 1 << CH_BAROMETRIC;
        break;
      default:
        result.ignoredPids++;
    }
    i += 1 + bytes;
  }
  return result;
}
