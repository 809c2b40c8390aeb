/**
 * Broker addresses as one setting: `mqtt://a:1883` or a comma-separated list
 * `mqtt://a:1883,mqtt://b:1883`. With a list, an mqtt.js client is handed every address (`servers`)
 * and tries the next one on each reconnect, so a rig or the server's link moves to a surviving
 * broker when its broker dies (the client-side balancer of the cluster layout, README).
 */
export interface BrokerAddress {
  host: string;
  port: number;
  protocol: 'mqtt' | 'mqtts';
}

export interface BrokerConnectTarget {
  /** The first address: what mqtt.connect is called with. */
  url: string;
  /** Every address (mqtt.js `servers`), present only for a list of two or more. */
  servers?: BrokerAddress[];
}

export function parseBrokerList(setting: string): BrokerConnectTarget {
  const urls = setting
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
  if (!urls.length) throw new Error('No MQTT broker address given');
  const servers = urls.map((u): BrokerAddress => {
    const url = new URL(u);
    const protocol = url.protocol.replace(/:$/, '');
    if (protocol !== 'mqtt' && protocol !== 'mqtts') throw new Error(`Broker address ${u}: only mqtt:// and mqtts:// are supported`);
    return { host: url.hostname, port: url.port ? Number(url.port) : protocol === 'mqtts' ? 8883 : 1883, protocol };
  });
  return servers.length > 1 ? { url: urls[0], servers } : { url: urls[0] };
}
