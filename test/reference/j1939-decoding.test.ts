import { describe, expect, it } from 'vitest';
import {
  CH_AMBIENT,
  CH_BAROMETRIC,
  CH_COOLANT,
  CH_COOLANT_HIGH_RES,
  CH_COOLANT_LEVEL,
  CH_COOLANT_PRESSURE,
  CH_RPM,
  CH_SPEED,
  CHANNEL_COUNT,
} from '../../services/bus-decoding/bus-channels.js';
import { parseHexBytes, parseHexNumber } from '../../services/bus-decoding/hex-bytes.js';
import { decodeJ1939Identifier } from '../../services/bus-decoding/j1939-identifier.js';
import { decodeJ1939Parameters } from '../../services/bus-decoding/j1939-parameters.js';

/** Decodes one frame given as hex text; returns the channels it set. */
function decode(canId: string, data: string): Record<number, number> {
  const bytes = new Uint8Array(8);
  const n = parseHexBytes(data, bytes);
  const values = new Float64Array(CHANNEL_COUNT).fill(NaN);
  const pgn = decodeJ1939Identifier(parseHexNumber(canId))!.pgn;
  const mask = decodeJ1939Parameters(pgn, bytes, n, values);
  const out: Record<number, number> = {};
  for (let ch = 0; ch < CHANNEL_COUNT; ch++) if (mask > 0 && (mask & (1 << ch)) !== 0) out[ch] = values[ch]!;
  return out;
}

// Identifier layout: SAE J1939-21 (priority 3 bits, EDP, DP, PF, PS, SA; PDU1 below PF 240).
describe('SAE J1939 identifiers', () => {
  it('splits 0x18FEEE00 into priority 6, PDU2, PGN 65262 from source address 0 (SAE J1939-21; the example in references.md)', () => {
    expect(decodeJ1939Identifier(0x18feee00)).toEqual({
      priority: 6,
      edp: 0,
      dataPage: 0,
      pduFormat: 0xfe,
      pduSpecific: 0xee,
      sourceAddress: 0,
      pdu: 2,
      destination: null,
      pgn: 65262,
    });
  });
  it('reads EEC1 0x0CF00400 as priority 3, PGN 61444 (PF 240 is the first PDU2 format)', () => {
    const id = decodeJ1939Identifier(0x0cf00400)!;
    expect([id.priority, id.pdu, id.pgn, id.sourceAddress]).toEqual([3, 2, 61444, 0]);
  });
  it('treats PF below 240 as PDU1: PS is the destination and not part of the PGN (0x18EA0017: request PGN 59904 to address 0 from 0x17)', () => {
    const id = decodeJ1939Identifier(0x18ea0017)!;
    expect([id.pdu, id.destination, id.pgn, id.sourceAddress]).toEqual([1, 0, 59904, 0x17]);
  });
  it('puts the data page into the PGN: 0x19FEEE00 is PGN 130798, not ET1', () => {
    expect(decodeJ1939Identifier(0x19feee00)!.pgn).toBe(0x1feee);
  });
  it('refuses identifiers wider than 29 bits', () => {
    expect(decodeJ1939Identifier(0x20000000)).toBeUndefined();
    expect(parseHexNumber('0x18FEEE00')).toBe(0x18feee00);
    expect(parseHexNumber('18FEEG00')).toBeNaN();
  });
});

// Scalings and byte positions: SAE J1939-71, as tabulated in /work/shared/references.md ("Telemetry encodings").
describe('SAE J1939-71 parameters, worked by hand', () => {
  it('SPN 110 (ET1 byte 1, 1 °C/bit, −40 °C): 0x7B = 123 → 83 °C, 0x00 → −40 °C, 0xFA = 250 → 210 °C', () => {
    expect(decode('18FEEE00', '7BFFFFFFFFFFFFFF')).toEqual({ [CH_COOLANT]: 83 });
    expect(decode('18FEEE00', '00FFFFFFFFFFFFFF')).toEqual({ [CH_COOLANT]: -40 });
    expect(decode('18FEEE00', 'FAFFFFFFFFFFFFFF')).toEqual({ [CH_COOLANT]: 210 });
  });
  it('SPN 110 reads 0xFE (error) and 0xFF (not available) as absent, not as 214 or 215 °C', () => {
    expect(decode('18FEEE00', 'FEFFFFFFFFFFFFFF')).toEqual({});
    expect(decode('18FEEE00', 'FFFFFFFFFFFFFFFF')).toEqual({});
  });
  it('SPN 108 (AMB byte 1, 0.5 kPa/bit) and SPN 171 (AMB bytes 4–5 little-endian, 0.03125 °C/bit, −273 °C; position from memory): C8 → 100 kPa, A0 24 = 9376 → 20 °C', () => {
    expect(decode('18FEF500', 'C8FFFFA024FFFFFF')).toEqual({ [CH_BAROMETRIC]: 100, [CH_AMBIENT]: 20 });
    // −10.5 °C: (262.5 / 0.03125) = 8400 = 0x20D0 → bytes D0 20.
    expect(decode('18FEF500', 'FFFFFFD020FFFFFF')).toEqual({ [CH_AMBIENT]: -10.5 });
  });
  it('SPN 171 reads 0xFExx (error) and 0xFFxx (not available) words as absent', () => {
    expect(decode('18FEF500', 'C8FFFF00FEFFFFFF')).toEqual({ [CH_BAROMETRIC]: 100 });
    expect(decode('18FEF500', 'FFFFFF12FFFFFFFF')).toEqual({});
  });
  it('SPN 190 (EEC1 bytes 4–5, 0.125 rpm/bit): E0 2E = 12000 → 1500 rpm; FF FA = 0xFAFF → 8031.875 rpm, the top of the range', () => {
    expect(decode('0CF00400', 'FFFFFFE02EFFFFFF')).toEqual({ [CH_RPM]: 1500 });
    expect(decode('0CF00400', 'FFFFFFFFFAFFFFFF')).toEqual({ [CH_RPM]: 8031.875 });
  });
  it('SPN 84 (CCVS1 bytes 2–3, 1/256 km/h per bit): 00 50 = 20480 → 80 km/h, 80 58 = 22656 → 88.5 km/h', () => {
    expect(decode('18FEF100', 'FF0050FFFFFFFFFF')).toEqual({ [CH_SPEED]: 80 });
    expect(decode('18FEF100', 'FF8058FFFFFFFFFF')).toEqual({ [CH_SPEED]: 88.5 });
  });
  it('SPN 109 / SPN 111 (PGN 65263 bytes 7 / 8, 2 kPa/bit / 0.4 %/bit; positions from memory): 32 → 100 kPa, C8 → 80 %', () => {
    expect(decode('18FEEF00', 'FFFFFFFFFFFF32C8')).toEqual({ [CH_COOLANT_PRESSURE]: 100, [CH_COOLANT_LEVEL]: 80 });
    expect(decode('18FEEF00', 'FFFFFFFFFFFFFFFA')).toEqual({ [CH_COOLANT_LEVEL]: 100 });
  });
  it('SPN 1637 high-resolution coolant (PGN 65129 bytes 3–4, 0.03125 °C/bit, −273 °C; PGN and bytes from memory): 28 2D = 11560 → 88.25 °C', () => {
    expect(decode('18FE6900', 'FFFF282DFFFFFFFF')).toEqual({ [CH_COOLANT_HIGH_RES]: 88.25 });
  });
  it('says a known group with a short data field is malformed (-2) and an unknown PGN is unknown (-1)', () => {
    const values = new Float64Array(CHANNEL_COUNT);
    expect(decodeJ1939Parameters(65262, Uint8Array.of(0x7b), 1, values)).toBe(-2);
    expect(decodeJ1939Parameters(65132, new Uint8Array(8), 8, values)).toBe(-1);
  });
});
