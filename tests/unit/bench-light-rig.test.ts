/**
 * The bench's lightweight publisher writes its telemetry JSON as text (bench/scenarios/light-rig.ts),
 * in column form (v2). The reference is the v2 schema and telemetryColumnsText: the text must be
 * valid, take the ingest's fast path, and be exactly what telemetryColumnsText (JSON.stringify)
 * makes of the same values.
 */
import { LightRig } from '../../bench/scenarios/light-rig';
import {
  isPlainTelemetryColumns,
  parsePayload,
  parseTelemetry,
  socketReadings,
  telemetryColumnsSchema,
  telemetryColumnsText,
} from '../../shared/mqtt';

const rig = (biasOn: boolean) =>
  new LightRig({
    rigCode: 'BI-07',
    username: 'u',
    password: 'p',
    brokerUrl: 'mqtt://127.0.0.1:1',
    sockets: 64,
    window: 20,
    resendMs: 5000,
    seed: 7,
    biasOn,
  });

test.each([true, false])('bias %s: valid column-form telemetry, byte for byte what telemetryColumnsText writes', (biasOn) => {
  const r = rig(biasOn);
  const now = Date.UTC(2026, 11, 2, 3, 0, 0);
  for (let seq = 1; seq <= 50; seq++) {
    const text = r.message(seq, now + seq * 1000);
    const parsed = parsePayload(telemetryColumnsSchema, text);
    expect(parsed.ok).toBe(true);
    const json = JSON.parse(text);
    expect(isPlainTelemetryColumns(json)).toBe(true);
    const t = parseTelemetry(text);
    if (!t.ok) throw new Error(t.reason);
    // Readings cycle through a pool of sets, but consecutive messages differ.
    const next = parseTelemetry(r.message(seq + 1, now));
    if (!next.ok) throw new Error(next.reason);
    expect(next.data.caseC).not.toEqual(t.data.caseC);
    expect(telemetryColumnsText(t.data)).toBe(text);
    expect(t.data).toMatchObject({ v: 2, rig: 'BI-07', seq, stressClockS: seq, ts: new Date(now + seq * 1000).toISOString() });
    expect(t.data.socket).toHaveLength(64);
    for (const s of socketReadings(t.data)) {
      expect(s.biasOn).toBe(biasOn);
      expect(s.tripped).toBe(false);
      expect(s.caseC).toBeGreaterThan(94);
      expect(s.caseC).toBeLessThan(98);
      if (biasOn) expect(s.iA).toBeCloseTo(0.3, 2);
      else expect(s.iA).toBe(1e-8);
    }
  }
});
