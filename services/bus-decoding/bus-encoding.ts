import { j1939Identifier } from './j1939-identifier.js';
import { PGN_AMB, PGN_CCVS1, PGN_EEC1, PGN_EFLP1, PGN_ET1 } from './j1939-parameters.js';
import { PID_AMBIENT, PID_BAROMETRIC, PID_COOLANT, PID_RPM, PID_SPEED, SERVICE_01_POSITIVE } from './obd-service01.js';

/** One reading's channels in engineering units (°C, km/h, rpm); NaN = not sent. Also the channels of a validated reading. */
export interface BusReading {
  coolantC: number;
  ambientC: number;
  speedKph: number;
  rpm: number;
  /** Atmospheric pressure, kPa absolute (SPN 108 / PID 0x33). */
  barometricKpa: number;
  /** Coolant level, % of full (SPN 111). */
  coolantLevelPct: number;
  /** Coolant pressure, kPa gauge (SPN 109). */
  coolantPressureKpa: number;
}

export interface EncodedFrame {
  /** 29-bit identifier, 8 hex digits. */
  canId: string;
  /** Data bytes, hex, no separators. */
  data: string;
}

/** Source address the simulated engine controller sends from (SAE J1939 "engine #1" is 0). */
export const ENGINE_SOURCE_ADDRESS = 0;
const DEFAULT_PRIORITY = 6;
const EEC1_PRIORITY = 3;
const NOT_AVAILABLE_BYTE = 0xff;

function hex2(b: number): string {
  return (b < 16 ? '0' : '') + b.toString(16).toUpperCase();
}

function byteOf(value: number, scale: number, add: number, max: number): number {
  if (Number.isNaN(value)) return NOT_AVAILABLE_BYTE;
  return Math.min(max, Math.max(0, Math.round((value - add) / scale)));
}

function wordOf(value: number, scale: number, add: number): [number, number] {
  if (Number.isNaN(value)) return [NOT_AVAILABLE_BYTE, NOT_AVAILABLE_BYTE];
  const raw = Math.min(0xfaff, Math.max(0, Math.round((value - add) / scale)));
  return [raw & 0xff, raw >>> 8];
}

function frame(priority: number, pgn: number, data: number[]): EncodedFrame {
  return {
    canId: j1939Identifier(priority, pgn, ENGINE_SOURCE_ADDRESS).toString(16).toUpperCase().padStart(8, '0'),
    data: data.map(hex2).join(''),
  };
}

/**
 * The J1939 frames a gateway would forward for one reading (SAE J1939-71 scaling; unused bytes
 * 0xFF "not available"): ET1, AMB, EEC1, CCVS1 and EFL/P1 where the reading has their channels.
 * @example j1939Frames({ coolantC: 83, ambientC: NaN, … })[0] // { canId: '18FEEE00', data: '7BFFFFFFFFFFFFFF' }
 */
export function j1939Frames(reading: BusReading): EncodedFrame[] {
  const out: EncodedFrame[] = [];
  const na = () => new Array<number>(8).fill(NOT_AVAILABLE_BYTE);
  if (!Number.isNaN(reading.coolantC)) {
    const d = na();
    d[0] = byteOf(reading.coolantC, 1, -40, 0xfa);
    out.push(frame(DEFAULT_PRIORITY, PGN_ET1, d));
  }
  if (!Number.isNaN(reading.ambientC) || !Number.isNaN(reading.barometricKpa)) {
    const d = na();
    d[0] = byteOf(reading.barometricKpa, 0.5, 0, 0xfa);
    [d[3], d[4]] = wordOf(reading.ambientC, 0.03125, -273);
    out.push(frame(DEFAULT_PRIORITY, PGN_AMB, d));
  }
  if (!Number.isNaN(reading.rpm)) {
    const d = na();
    [d[3], d[4]] = wordOf(reading.rpm, 0.125, 0);
    out.push(frame(EEC1_PRIORITY, PGN_EEC1, d));
  }
  if (!Number.isNaN(reading.speedKph)) {
    const d = na();
    [d[1], d[2]] = wordOf(reading.speedKph, 1 / 256, 0);
    out.push(frame(DEFAULT_PRIORITY, PGN_CCVS1, d));
  }
  if (!Number.isNaN(reading.coolantLevelPct) || !Number.isNaN(reading.coolantPressureKpa)) {
    const d = na();
    d[6] = byteOf(reading.coolantPressureKpa, 2, 0, 0xfa);
    d[7] = byteOf(reading.coolantLevelPct, 0.4, 0, 0xfa);
    out.push(frame(DEFAULT_PRIORITY, PGN_EFLP1, d));
  }
  return out;
}

/**
 * One service 01 positive response carrying every channel OBD-II has for the reading
 * (SAE J1979: 0x05, 0x46, 0x0C, 0x0D, 0x33), hex with spaces between bytes.
 * @example obdResponse({ coolantC: 83, ambientC: NaN, speedKph: NaN, rpm: NaN, … }) // '41 05 7B'
 */
export function obdResponse(reading: BusReading): string {
  const bytes = [SERVICE_01_POSITIVE];
  const a = (v: number, add: number) => Math.min(255, Math.max(0, Math.round(v - add)));
  if (!Number.isNaN(reading.coolantC)) bytes.push(PID_COOLANT, a(reading.coolantC, -40));
  if (!Number.isNaN(reading.ambientC)) bytes.push(PID_AMBIENT, a(reading.ambientC, -40));
  if (!Number.isNaN(reading.rpm)) {
    const raw = Math.min(0xffff, Math.max(0, Math.round(reading.rpm * 4)));
    bytes.push(PID_RPM, raw >>> 8, raw & 0xff);
  }
  if (!Number.isNaN(reading.speedKph)) bytes.push(PID_SPEED, a(reading.speedKph, 0));
  if (!Number.isNaN(reading.barometricKpa)) bytes.push(PID_BAROMETRIC, a(reading.barometricKpa, 0));
  return bytes.map(hex2).join(' ');
}
