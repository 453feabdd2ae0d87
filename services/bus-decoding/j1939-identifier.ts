/**
 * The 29-bit SAE J1939 identifier (SAE J1939-21): priority (3 bits), extended data page (1),
 * data page (1), PDU format (8), PDU specific (8), source address (8).
 */
export interface J1939Identifier {
  priority: number;
  /** Extended data page (the bit formerly "reserved"). */
  edp: number;
  dataPage: number;
  pduFormat: number;
  pduSpecific: number;
  sourceAddress: number;
  /** 1 when PDU format < 240 (PS is a destination address), else 2 (PS is a group extension). */
  pdu: 1 | 2;
  /** Destination address of a PDU1 frame (255 = global); null for PDU2. */
  destination: number | null;
  /** Parameter group number: EDP·131072 + DP·65536 + PF·256 (+ PS for PDU2). */
  pgn: number;
}

/** Largest 29-bit identifier. */
export const MAX_EXTENDED_ID = 0x1fffffff;
/** PDU format values from this one up are PDU2 (broadcast, PS = group extension). */
export const PDU2_MIN_FORMAT = 240;

/**
 * PGN of a 29-bit identifier without building an object (the hot path); -1 when `canId` is not
 * a 29-bit integer.
 * @example pgnOf(0x18feee00) // 65262
 */
export function pgnOf(canId: number): number {
  if (!(canId >= 0 && canId <= MAX_EXTENDED_ID) || canId !== Math.floor(canId)) return -1;
  const pf = (canId >>> 16) & 0xff;
  const top = (canId >>> 24) & 0x03; // EDP, DP
  return pf >= PDU2_MIN_FORMAT ? (canId >>> 8) & 0x3ffff : (top << 16) | (pf << 8);
}

/**
 * Splits a 29-bit identifier into its fields.
 * @example decodeJ1939Identifier(0x18feee00) // { priority: 6, pgn: 65262, sourceAddress: 0, pdu: 2, … }
 */
export function decodeJ1939Identifier(canId: number): J1939Identifier | undefined {
  const pgn = pgnOf(canId);
  if (pgn < 0) return undefined;
  const pduFormat = (canId >>> 16) & 0xff;
  const pduSpecific = (canId >>> 8) & 0xff;
  const pdu = pduFormat >= PDU2_MIN_FORMAT ? 2 : 1;
  return {
    priority: (canId >>> 26) & 0x07,
    edp: (canId >>> 25) & 0x01,
    dataPage: (canId >>> 24) & 0x01,
    pduFormat,
    pduSpecific,
    sourceAddress: canId & 0xff,
    pdu,
    destination: pdu === 1 ? pduSpecific : null,
    pgn,
  };
}

/**
 * The identifier of a PDU2 frame, for encoders and tests.
 * @example j1939Identifier(6, 65262, 0) // 0x18feee00
 */
export function j1939Identifier(priority: number, pgn: number, sourceAddress: number): number {
  return (priority & 0x07) * 0x4000000 + ((pgn & 0x3ffff) << 8) + (sourceAddress & 0xff);
}
