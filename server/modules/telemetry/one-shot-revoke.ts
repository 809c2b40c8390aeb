/**
 * A revocation from an API process that holds no MQTT link of its own — a standby with
 * EMBERLOT_WORKERS=elect (server/cluster/workers.ts): one short server connection to the brokers
 * (the same list and server account as the leader's link, its own client id, clean session)
 * publishes `emberlot/v1/internal/revoke` at QoS 1 and closes. In Redis mode every broker receives
 * it (broker/redis-mode.ts), so the rig is disconnected wherever it is connected. Not routed through
 * the leader: it works while no process leads, and the broker's PUBACK is the answer.
 */
import { randomBytes } from 'node:crypto';
import mqtt from 'mqtt';
import { parseBrokerList, topics, type RevokeMessage } from '../../../shared/mqtt';

export interface OneShotMqttAccount {
  /** One broker or a comma-separated list (shared/mqtt/broker-list.ts): the next is tried on a retry. */
  url: string;
  username: string;
  password: string;
}

/** Resolves true once a broker acknowledged the revocation, false when none did within `timeoutMs`. */
export function publishRevokeOnce(account: OneShotMqttAccount, rigCode: string, timeoutMs = 5_000): Promise<boolean> {
  const target = parseBrokerList(account.url);
  const message: RevokeMessage = { v: 1, rig: rigCode };
  const c = mqtt.connect(target.url, {
    ...(target.servers ? { servers: target.servers } : {}),
    clientId: `emberlot-revoke-${randomBytes(4).toString('hex')}`,
    username: account.username,
    password: account.password,
    protocolVersion: 4,
    clean: true,
    connectTimeout: Math.min(3_000, timeoutMs),
    reconnectPeriod: 250,
  });
  c.on('error', () => undefined); // a refused or failed connect is retried until the deadline
  return new Promise<boolean>((resolve) => {
    let settled = false;
    const finish = (ok: boolean) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      c.end(true);
      resolve(ok);
    };
    const timer = setTimeout(() => finish(false), timeoutMs);
    c.once('connect', () => c.publish(topics.revoke, JSON.stringify(message), { qos: 1 }, (err) => finish(!err)));
  });
}
