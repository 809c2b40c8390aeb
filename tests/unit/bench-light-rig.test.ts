/**
 * The bench's lightweight publisher writes its telemetry JSON as text (bench/scenarios/light-rig.ts).
 * The reference is the v1 schema and JSON.stringify: the text must be valid v1 telemetry, take the
 * ingest's fast path, and be exactly what JSON.stringify makes of the same values.
 */
import { LightRig } from '../../bench/scenarios/light-rig';
import { isPlainTelemetry, parsePayload, telemetrySchema } from '../../shared/mqtt';

const rig = (biasOn: boolean) =>
  new LightRig({ rigCode: 'BI-07', username: 'u', password: 'p', brokerUrl: 'mqtt://127.0.0.1:1', sockets: 64, window: 20, resendMs: 5000, seed: 7, biasOn });

test.each([true, false])('bias %s: valid v1 telemetry, byte for byte what JSON.stringify writes', (biasOn) => {
  const r = rig(biasOn);
  const now = Date.UTC(2026, 11, 2, 3, 0, 0);
  for (let seq = 1; seq <= 50; seq++) {
    const text = r.message(seq, now + seq * 1000);
    const parsed = parsePayload(telemetrySchema, text);
    expect(parsed.ok).toBe(true);
    const json = JSON.parse(text);
    expect(isPlainTelemetry(json)).toBe(true);
    expect(JSON.stringify(json)).toBe(text);
    expect(json).toMatchObject({ rig: 'BI-07', seq, stressClockS: seq, ts: new Date(now + seq * 1000).toISOString() });
    expect(json.sockets).toHaveLength(64);
    for (const s of json.sockets) {
      expect(s.biasOn).toBe(biasOn);
      expect(s.caseC).toBeGreaterThan(94);
      expect(s.caseC).toBeLessThan(98);
      if (biasOn) expect(s.iA).toBeCloseTo(0.3, 2);
      else expect(s.iA).toBe(1e-8);
    }
  }
});
