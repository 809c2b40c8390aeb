/**
 * The simulated rigs' command log, seen from inside the rig: every command delivered on the rig's
 * `commands` topic and every ack it published. The rig applies a cmdId once and answers repeats
 * from memory with the same outcome, so the FIRST ack of a cmdId is the moment it was applied (or
 * refused) and later acks are harmless repeats.
 *
 * It wraps mqtt.js's `connect` (the function rig-simulator/rig.ts calls) for clients whose id
 * starts with `rig-`; nothing about the rig's behaviour changes.
 */
import type { MqttClient } from 'mqtt';

export interface CommandDelivery {
  at: number;
  cmdId: string;
  type: string;
  body: Record<string, unknown>;
}

export interface AckRecord {
  at: number;
  cmdId: string;
  ok: boolean;
  error?: string;
}

export interface RigCommandLog {
  /** Deliveries per rig code (stored confirmations left out), repeats included. */
  deliveries(rigCode: string): CommandDelivery[];
  acks(rigCode: string): AckRecord[];
  /** First ack per cmdId, in order: what the rig applied (ok) or refused. */
  applied(rigCode: string): AckRecord[];
  uninstall(): void;
}

export function installRigCommandLog(): RigCommandLog {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const ns = require('mqtt') as { default?: { connect: (...a: unknown[]) => MqttClient }; connect: (...a: unknown[]) => MqttClient };
  const target = (ns.default ?? ns) as { connect: (...a: unknown[]) => MqttClient };
  const original = target.connect;
  const deliveries = new Map<string, CommandDelivery[]>();
  const acks = new Map<string, AckRecord[]>();
  const listOf = <T>(m: Map<string, T[]>, k: string) => {
    let l = m.get(k);
    if (!l) m.set(k, (l = []));
    return l;
  };

  target.connect = function patched(this: unknown, ...args: unknown[]): MqttClient {
    const client = original.apply(this, args as never) as MqttClient;
    const opts = (typeof args[1] === 'object' && args[1]) || (typeof args[0] === 'object' && args[0]) || {};
    const clientId = String((opts as { clientId?: string }).clientId ?? '');
    const m = /^rig-([A-Z0-9][A-Z0-9-]{1,31})$/.exec(clientId);
    if (!m) return client;
    const rigCode = m[1];
    client.on('message', (topic: string, payload: Buffer) => {
      if (!topic.endsWith(`/rigs/${rigCode}/commands`)) return;
      try {
        const body = JSON.parse(payload.toString('utf8')) as Record<string, unknown>;
        if (body.type === 'stored') return;
        listOf(deliveries, rigCode).push({ at: Date.now(), cmdId: String(body.cmdId), type: String(body.type), body });
      } catch {
        /* malformed: the rig refuses it; not a state change */
      }
    });
    const publish = client.publish.bind(client) as (...a: unknown[]) => MqttClient;
    (client as unknown as { publish: (...a: unknown[]) => MqttClient }).publish = (...a: unknown[]) => {
      const [topic, payload] = a as [string, string | Buffer];
      if (typeof topic === 'string' && topic.endsWith(`/rigs/${rigCode}/command-acks`)) {
        try {
          const ack = JSON.parse(payload.toString()) as { cmdId: string; ok: boolean; error?: string };
          listOf(acks, rigCode).push({ at: Date.now(), cmdId: ack.cmdId, ok: ack.ok, ...(ack.error ? { error: ack.error } : {}) });
        } catch {
          /* not ours */
        }
      }
      return publish(...a);
    };
    return client;
  };

  return {
    deliveries: (rig) => [...(deliveries.get(rig) ?? [])],
    acks: (rig) => [...(acks.get(rig) ?? [])],
    applied: (rig) => {
      const seen = new Set<string>();
      return (acks.get(rig) ?? []).filter((a) => (seen.has(a.cmdId) ? false : (seen.add(a.cmdId), true)));
    },
    uninstall: () => {
      target.connect = original;
    },
  };
}
