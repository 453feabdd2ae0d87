import { describe, expect, it } from 'vitest';
import {
  CH_AMBIENT,
  CH_BAROMETRIC,
  CH_COOLANT,
  CH_RPM,
  CH_SPEED,
  CHANNEL_COUNT,
} from '../../services/bus-decoding/bus-channels.js';
import { parseHexBytes } from '../../services/bus-decoding/hex-bytes.js';
import { decodeObdResponse, type ObdDecodeResult } from '../../services/bus-decoding/obd-service01.js';

function decode(hex: string): { channels: Record<number, number>; ignoredPids: number; error: string | null } {
  const bytes = new Uint8Array(8);
  const n = parseHexBytes(hex, bytes);
  const values = new Float64Array(CHANNEL_COUNT);
  const r = decodeObdResponse(bytes, n, values, {} as ObdDecodeResult);
  const channels: Record<number, number> = {};
  for (let ch = 0; ch < CHANNEL_COUNT; ch++) if ((r.mask & (1 << ch)) !== 0) channels[ch] = values[ch]!;
  return { channels, ignoredPids: r.ignoredPids, error: r.error };
}

// Formulas: SAE J1979 / ISO 15031-5 service 01, as tabulated in references.md ("Telemetry encodings").
describe('SAE J1979 service 01 responses, worked by hand', () => {
  it('PID 0x05 coolant A − 40: 41 05 7B → 123 − 40 = 83 °C', () => {
    expect(decode('41 05 7B').channels).toEqual({ [CH_COOLANT]: 83 });
  });
  it('PID 0x46 ambient A − 40: 41 46 3C → 60 − 40 = 20 °C', () => {
    expect(decode('41 46 3C').channels).toEqual({ [CH_AMBIENT]: 20 });
  });
  it('PID 0x0C engine speed (256A + B)/4: 41 0C 1A F8 → (6656 + 248)/4 = 1726 rpm', () => {
    expect(decode('41 0C 1A F8').channels).toEqual({ [CH_RPM]: 1726 });
  });
  it('PID 0x0D vehicle speed A and PID 0x33 barometric pressure A: 41 0D 32 33 65 → 50 km/h, 101 kPa', () => {
    expect(decode('41 0D 32 33 65').channels).toEqual({ [CH_SPEED]: 50, [CH_BAROMETRIC]: 101 });
  });
  it('walks several PIDs in one response: 41 05 7B 0C 1A F8 0D 32', () => {
    expect(decode('41057B0C1AF80D32').channels).toEqual({ [CH_COOLANT]: 83, [CH_RPM]: 1726, [CH_SPEED]: 50 });
  });
  it('skips a known PID it does not decode (0x0F intake air, 1 byte; length from memory) and stops at one it does not know', () => {
    expect(decode('41 0F 50 05 7B')).toEqual({ channels: { [CH_COOLANT]: 83 }, ignoredPids: 1, error: null });
    expect(decode('41 05 7B 99 01 0D 32')).toEqual({ channels: { [CH_COOLANT]: 83 }, ignoredPids: 1, error: null });
  });
  it('rejects a negative response, another service and a response cut short', () => {
    expect(decode('7F 01 12').error).toMatch(/negative/);
    expect(decode('42 05 7B').error).toMatch(/0x41/);
    expect(decode('41 0C 1A').error).toMatch(/2 data bytes/);
  });
});
