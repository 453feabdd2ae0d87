import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { CHANNEL_COUNT } from '../../services/bus-decoding/bus-channels.js';
import { SLOT_RECORD_LENGTH, VehicleSlots } from '../../services/bus-decoding/vehicle-slots.js';
import { decodeSlotRecord, encodeSlotRecord } from '../../services/db/bus-slot-writes.js';

describe('stored slot records', () => {
  it('decode to exactly the record that was encoded, for any merged samples', () => {
    const sample = fc.record({
      ms: fc.integer({ min: 0, max: 9999 }),
      ch: fc.integer({ min: 0, max: CHANNEL_COUNT - 1 }),
      v: fc.double({ noNaN: true, noDefaultInfinity: true }),
    });
    fc.assert(
      fc.property(fc.array(sample, { maxLength: 30 }), (samples) => {
        const slots = new VehicleSlots(10_000);
        const rec = slots.record(1_790_000_000_000);
        for (const s of samples) slots.merge(1_790_000_000_000 + s.ms, s.ch, s.v);
        const bytes = Buffer.alloc(2 + CHANNEL_COUNT * 32);
        const n = encodeSlotRecord(rec, bytes);
        const back = new Float64Array(SLOT_RECORD_LENGTH);
        decodeSlotRecord(bytes.subarray(0, n), back);
        expect(Array.from(back)).toEqual(Array.from(rec));
      }),
      { numRuns: 500 },
    );
  });

  it('store a gateway that sends each group once a period in 66 bytes for four channels', () => {
    const slots = new VehicleSlots(10_000);
    for (const ch of [0, 2, 4, 5]) slots.merge(1_790_000_000_000, ch, 50);
    expect(encodeSlotRecord(slots.record(1_790_000_000_000), Buffer.alloc(258))).toBe(66);
  });
});
