import { describe, expect, it } from 'vitest';
import { boilWords } from '../../services/analysis/findings/overheating-trend.js';
import {
  kindLabel,
  PRIORITY_LEGEND,
  relatedCodeLabel,
  resolvedReasonLabel,
  RISK_LEGEND,
  sensorEventLabel,
} from '../../services/report/finding-labels.js';

describe('report wording', () => {
  it('never says "in about 0 days": a projection under a day says the peaks already reach boiling', () => {
    expect(boilWords(0.3, 121.2)).toBe('peaks already reach the boiling point of 121 °C at cap pressure');
    expect(boilWords(1.2, 121)).toBe('boiling point 121 °C in about 1 day at this rate');
    expect(boilWords(12.4, 121)).toBe('boiling point 121 °C in about 12 days at this rate');
  });

  it('labels the boil-margin kind so that it is true after the coolant has boiled too', () => {
    expect(kindLabel('boil-margin')).toBe('too little margin to boiling');
    expect(kindLabel('boil-margin')).not.toMatch(/close to/);
  });

  it('turns stored identifiers into words', () => {
    expect(sensorEventLabel('cold-soak-mismatch')).toBe('off from the air temperature after a cold soak');
    expect(resolvedReasonLabel('evidence-stopped')).toMatch(
      /^the evidence stopped \(no new sign of it for \d+ days\)$/,
    );
    expect(resolvedReasonLabel('service-event:pressure-cap-replaced')).toBe('repair recorded: pressure cap replaced');
  });

  it('gives a trouble code as a related code, with the J1939 SPN/FMI beside the OBD-II code (SAE J1939-71 SPN 110; FMI pairing from memory)', () => {
    expect(relatedCodeLabel('P0128')).toBe('related code P0128 (OBD-II) / SPN 110 FMI 18 (J1939)');
    expect(relatedCodeLabel('P0217')).toBe('related code P0217 (OBD-II) / SPN 110 FMI 0 (J1939)');
    expect(relatedCodeLabel('P9999')).toBe('related code P9999 (OBD-II)');
  });

  it('has a legend entry for every booking word and explains risk', () => {
    expect(Object.keys(PRIORITY_LEGEND).sort()).toEqual(['at next service', 'book now', 'book this week']);
    expect(RISK_LEGEND).toMatch(/0–100/);
  });
});
