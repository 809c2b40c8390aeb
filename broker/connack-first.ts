/**
 * CONNACK first. MQTT 3.1.1 [MQTT-3.2.0-1]: the first packet the server sends on a connection is
 * the CONNACK. aedes 1.x restores a persistent session's subscriptions (clean: false) before it
 * writes the CONNACK, and between the two it still stores the will and registers the client — Redis
 * round trips in Redis mode, longer on a busy machine. A message published to the session's topics
 * inside that window went out ahead of the CONNACK. mqtt.js then never finished connecting: it keeps
 * its PUBACK for that message until it is connected and parses nothing more (the CONNACK) until that
 * PUBACK has gone, so the connect ended in "connack timeout" — a rig coming back with its session
 * while the server sent it a command lost its connection attempt.
 *
 * The fix: live deliveries to a connection are held until aedes has connected it (CONNACK written,
 * the session's stored queue sent), then handed to aedes in order. A persistent session's QoS > 0
 * message is queued before it is emitted, so the stored queue often sends it first; what the queue
 * sends while connecting is entered in aedes' own duplicate table (`client.duplicates`: the highest
 * message counter seen per origin broker), so the live copy — held, or arriving later — is dropped
 * there instead of reaching the rig twice. A connection that closes before it is connected drops
 * what was held: QoS > 0 messages stay in its stored queue.
 */
import type { Aedes as AedesBroker, AedesOptions, Client } from 'aedes';

type Deliver = (packet: DeliveredPacket, cb: () => void) => void;

/** The parts of a packet aedes hands to a client's delivery functions that this file reads. */
interface DeliveredPacket {
  brokerId?: string;
  brokerCounter?: number | string;
}

/** aedes keeps these on each client instance; they are not in its type declarations. */
interface DeliveringClient {
  closed: boolean;
  deliver0: Deliver;
  deliverQoS: Deliver;
  /** origin broker id → highest message counter delivered (aedes drops a live packet at or below it) */
  duplicates: Record<string, number>;
}

type Held = { deliver: Deliver; packet: DeliveredPacket; cb: () => void }[];

export interface ConnackFirst {
  /** aedes `preConnect`: wraps the new connection's delivery functions before any subscription is restored. */
  preConnect: NonNullable<AedesOptions['preConnect']>;
  /** After `Aedes.createBroker` (the persistence exists only then): notes what the stored queue sends. */
  attach(broker: AedesBroker): void;
  /** Live messages held back so far because their connection had no CONNACK yet (counter). */
  readonly heldDeliveries: number;
}

export function createConnackFirst(): ConnackFirst {
  const holds = new WeakMap<object, Held>();
  let heldDeliveries = 0;

  function hold(client: Client): void {
    const c = client as unknown as DeliveringClient;
    const held: Held = [];
    holds.set(client, held);
    const wrap =
      (deliver: Deliver): Deliver =>
      (packet, cb) => {
        if (!holds.has(client)) return deliver(packet, cb);
        if (c.closed) return setImmediate(cb);
        heldDeliveries++;
        held.push({ deliver, packet, cb });
      };
    const deliver0 = c.deliver0;
    const deliverQoS = c.deliverQoS;
    c.deliver0 = wrap(deliver0);
    c.deliverQoS = wrap(deliverQoS);

    const release = (send: boolean) => {
      if (!holds.has(client)) return;
      holds.delete(client);
      // aedes' own delivery: its duplicate check drops what the stored queue has sent.
      for (const { deliver, packet, cb } of held.splice(0)) {
        if (send && !c.closed) deliver(packet, cb);
        else setImmediate(cb);
      }
    };
    // aedes emits 'connected' on the client after the CONNACK and the stored queue.
    client.once('connected', () => release(true));
    client.conn.once('close', () => release(false));
  }

  return {
    preConnect(client, _packet, callback) {
      hold(client);
      callback(null, true);
    },
    attach(broker) {
      // aedes sets `persistence` in listen(); its declarations leave it out.
      const { persistence } = broker as unknown as {
        persistence: { outgoingUpdate(client: Client, packet: DeliveredPacket): Promise<unknown> };
      };
      const outgoingUpdate = persistence.outgoingUpdate.bind(persistence);
      // While a client connects, only aedes' stored-queue replay calls outgoingUpdate for it (its
      // live deliveries are held here): enter each replayed message in the duplicate table.
      persistence.outgoingUpdate = (client, packet) => {
        const { brokerId } = packet;
        const counter = Number(packet.brokerCounter);
        if (holds.has(client) && brokerId && Number.isFinite(counter)) {
          const { duplicates } = client as unknown as DeliveringClient;
          duplicates[brokerId] = Math.max(duplicates[brokerId] ?? 0, counter);
        }
        return outgoingUpdate(client, packet);
      };
    },
    get heldDeliveries() {
      return heldDeliveries;
    },
  };
}
