/** Shared helpers for the broker suites: loopback clients that fail fast and clean up. */
import mqtt, { type IClientOptions, type MqttClient } from 'mqtt';
import type { Authenticate, Principal } from '../../broker/broker';

export const CREDS: Record<string, { password: string; principal: Principal }> = {
  'rig-OV-01': { password: 'ov01-secret', principal: { kind: 'rig', rigCode: 'OV-01' } },
  'rig-OV-02': { password: 'ov02-secret', principal: { kind: 'rig', rigCode: 'OV-02' } },
  'emberlot-server': { password: 'server-secret', principal: { kind: 'server' } },
};

export const mapAuthenticate: Authenticate = async (username, password) => {
  const entry = CREDS[username];
  return entry && entry.password === password ? entry.principal : null;
};

/**
 * Loopback connect that fails fast on a refusal (CONNACK code) or a dead broker. The CONNACK wait is
 * 10 s: a loopback connect never needs that long, but on a loaded 2-core CI machine one through the
 * Redis-mode brokers took over 1.2 s (several Redis round trips), so 3 s was within reach of plain
 * slowness. `onCreated` sees the client before it connects (listeners for packets that come with
 * the CONNACK).
 */
export function connectClient(port: number, opts: IClientOptions, onCreated?: (client: MqttClient) => void): Promise<MqttClient> {
  return new Promise((resolve, reject) => {
    const client = mqtt.connect(`mqtt://127.0.0.1:${port}`, {
      protocolVersion: 4,
      reconnectPeriod: 0,
      connectTimeout: 10_000,
      ...opts,
    });
    onCreated?.(client);
    const onError = (err: Error) => {
      client.end(true);
      reject(err);
    };
    client.once('error', onError);
    client.once('connect', () => {
      client.off('error', onError);
      client.on('error', () => undefined); // refused publishes surface as errors on close
      resolve(client);
    });
  });
}

export const rigClient = (port: number, rigCode: string, extra: IClientOptions = {}, onCreated?: (client: MqttClient) => void) =>
  connectClient(
    port,
    {
      clientId: `rig-${rigCode}`,
      username: `rig-${rigCode}`,
      password: CREDS[`rig-${rigCode}`].password,
      ...extra,
    },
    onCreated,
  );

export const serverClient = (port: number, clientId = 'emberlot-server-test') =>
  connectClient(port, { clientId, username: 'emberlot-server', password: 'server-secret' });

export function waitFor(cond: () => boolean, timeoutMs = 3000, label = 'condition'): Promise<void> {
  const start = Date.now();
  return new Promise((resolve, reject) => {
    const tick = () => {
      if (cond()) return resolve();
      if (Date.now() - start > timeoutMs) return reject(new Error(`timed out waiting for ${label}`));
      setTimeout(tick, 10);
    };
    tick();
  });
}

export const waitClosed = (client: MqttClient, timeoutMs = 3000) =>
  new Promise<void>((resolve, reject) => {
    if (!client.connected) return resolve();
    const t = setTimeout(() => reject(new Error('client was not disconnected')), timeoutMs);
    client.once('close', () => {
      clearTimeout(t);
      resolve();
    });
  });

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function endAll(clients: MqttClient[]): Promise<void> {
  await Promise.all(clients.map((c) => c.endAsync(true).catch(() => undefined)));
}
