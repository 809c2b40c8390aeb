import { parseBrokerList } from '../../shared/mqtt';

describe('parseBrokerList (one broker URL or a comma-separated list)', () => {
  test('one URL: no servers list, the URL as given', () => {
    expect(parseBrokerList('mqtt://127.0.0.1:18830')).toEqual({ url: 'mqtt://127.0.0.1:18830' });
  });

  test('a list: every address in order for mqtt.js `servers`, the first as the URL', () => {
    expect(parseBrokerList(' mqtt://10.0.0.11:18830 , mqtt://10.0.0.12:18831,')).toEqual({
      url: 'mqtt://10.0.0.11:18830',
      servers: [
        { host: '10.0.0.11', port: 18830, protocol: 'mqtt' },
        { host: '10.0.0.12', port: 18831, protocol: 'mqtt' },
      ],
    });
  });

  test('default ports: 1883 for mqtt, 8883 for mqtts (IANA registrations, from memory)', () => {
    expect(parseBrokerList('mqtt://a.lab,mqtts://b.lab').servers).toEqual([
      { host: 'a.lab', port: 1883, protocol: 'mqtt' },
      { host: 'b.lab', port: 8883, protocol: 'mqtts' },
    ]);
  });

  test('refuses an empty setting and other schemes with a readable reason', () => {
    expect(() => parseBrokerList(' , ')).toThrow('No MQTT broker address given');
    expect(() => parseBrokerList('mqtt://a:1,ws://b:2')).toThrow('Broker address ws://b:2: only mqtt:// and mqtts:// are supported');
  });
});
