import {
  CH_AMBIENT,
  CH_BAROMETRIC,
  CH_COOLANT,
  CH_COOLANT_HIGH_RES,
  CH_COOLANT_LEVEL,
  CH_COOLANT_PRESSURE,
  CH_RPM,
  CH_SPEED,
} from './bus-channels.js';

/**
 * The parameter groups thermocline decodes (SAE J1939-71). Byte positions are 1-based in the
 * standard's tables; here `offset` is 0-based. Multi-byte parameters are little-endian.
 */
export const PGN_ET1 = 65262; // Engine Temperature 1
export const PGN_AMB = 65269; // Ambient Conditions
export const PGN_EEC1 = 61444; // Electronic Engine Controller 1
export const PGN_CCVS1 = 65265; // Cruise Control / Vehicle Speed 1
export const PGN_EFLP1 = 65263; // Engine Fluid Level / Pressure 1
/** Engine Temperature 3, which carries SPN 1637 (PGN and byte position from memory: check against J1939-71). */
export const PGN_ET3 = 65129;

/** J1939 frames of these groups are single frames of 8 bytes. */
export const J1939_FRAME_BYTES = 8;

/** One-byte values above this are not measurements: 0xFE error, 0xFF not available (0xFB–0xFD reserved). */
const BYTE_VALID_MAX = 0xfa;
/** Two-byte values above this are not measurements: 0xFExx error, 0xFFxx not available. */
const WORD_VALID_MAX = 0xfaff;

interface Spn {
  channel: number;
  offset: number;
  bytes: 1 | 2;
  scale: number;
  add: number;
}

/** SAE J1939-71 slots; positions marked "memory" in docs/design-log and references.md. */
const SPNS_BY_PGN = new Map<number, readonly Spn[]>([
  // SPN 110 engine coolant temperature: byte 1, 1 °C/bit, −40 °C.
  [PGN_ET1, [{ channel: CH_COOLANT, offset: 0, bytes: 1, scale: 1, add: -40 }]],
  // SPN 108 barometric pressure: byte 1, 0.5 kPa/bit. SPN 171 ambient air temperature: bytes 4–5, 0.03125 °C/bit, −273 °C.
  [
    PGN_AMB,
    [
      { channel: CH_BAROMETRIC, offset: 0, bytes: 1, scale: 0.5, add: 0 },
      { channel: CH_AMBIENT, offset: 3, bytes: 2, scale: 0.03125, add: -273 },
    ],
  ],
  // SPN 190 engine speed: bytes 4–5, 0.125 rpm/bit.
  [PGN_EEC1, [{ channel: CH_RPM, offset: 3, bytes: 2, scale: 0.125, add: 0 }]],
  // SPN 84 wheel-based vehicle speed: bytes 2–3, 1/256 km/h per bit.
  [PGN_CCVS1, [{ channel: CH_SPEED, offset: 1, bytes: 2, scale: 1 / 256, add: 0 }]],
  // SPN 109 coolant pressure: byte 7, 2 kPa/bit; SPN 111 coolant level: byte 8, 0.4 %/bit (positions from memory).
  [
    PGN_EFLP1,
    [
      { channel: CH_COOLANT_PRESSURE, offset: 6, bytes: 1, scale: 2, add: 0 },
      { channel: CH_COOLANT_LEVEL, offset: 7, bytes: 1, scale: 0.4, add: 0 },
    ],
  ],
  // SPN 1637 engine coolant temperature (high resolution): bytes 3–4, 0.03125 °C/bit, −273 °C (from memory).
  [PGN_ET3, [{ channel: CH_COOLANT_HIGH_RES, offset: 2, bytes: 2, scale: 0.03125, add: -273 }]],
]);

/** True for the parameter groups decoded here. */
export function isKnownPgn(pgn: number): boolean {
  return SPNS_BY_PGN.has(pgn);
}

/**
 * Decodes the parameters of a known group from `data` (its `length` bytes) into `values`
 * (indexed by channel; untouched where the group has no such parameter) and returns a bit mask
 * of the channels it set. A parameter that reads "error" or "not available" is absent: not set.
 * Returns -1 for an unknown PGN and -2 for a data field shorter than 8 bytes.
 * @example decodeJ1939Parameters(65262, Uint8Array.of(0x7b, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff), 8, values) // 1; values[0] = 83
 */
export function decodeJ1939Parameters(pgn: number, data: Uint8Array, length: number, values: Float64Array): number {
  const spns = SPNS_BY_PGN.get(pgn);
  if (!spns) return -1;
  if (length < J1939_FRAME_BYTES) return -2;
  let mask = 0;
  for (const s of spns) {
    let raw: number;
    if (s.bytes === 1) {
      raw = data[s.offset]!;
      if (raw > BYTE_VALID_MAX) continue;
    } else {
      raw = data[s.offset]! | (data[s.offset + 1]! << 8);
      if (raw > WORD_VALID_MAX) continue;
    }
    values[s.channel] = raw * s.scale + s.add;
    mask |= 1 << s.channel;
  }
  return mask;
}

/** The groups and byte layout, for the encoder (bus-encoding.ts) and documentation. */
export function spnLayout(pgn: number): readonly Spn[] | undefined {
  return SPNS_BY_PGN.get(pgn);
}
