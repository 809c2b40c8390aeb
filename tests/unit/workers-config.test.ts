/** EMBERLOT_WORKERS / EMBERLOT_INGEST_CLIENT_ID (server/config.ts): the single-process default stays unless asked. */
import { configFromEnv, parseWorkers } from '../../server/config';
import { ConfigError } from '../../server/secrets';

describe('workers setting', () => {
  it('defaults to one process doing everything (npm start unchanged)', () => {
    expect(configFromEnv({}).workers).toEqual({ mode: 'single', ingestClientId: 'emberlot-ingest' });
    expect(parseWorkers({ EMBERLOT_WORKERS: 'single' }).mode).toBe('single');
  });

  it('elect, with the shared ingest client id', () => {
    expect(parseWorkers({ EMBERLOT_WORKERS: ' Elect ', EMBERLOT_INGEST_CLIENT_ID: 'lab-ingest' })).toEqual({
      mode: 'elect',
      ingestClientId: 'lab-ingest',
    });
  });

  it('refuses an unknown mode and a rig-like client id, naming the setting', () => {
    expect(() => parseWorkers({ EMBERLOT_WORKERS: 'both' })).toThrow(ConfigError);
    expect(() => parseWorkers({ EMBERLOT_WORKERS: 'both' })).toThrow(/EMBERLOT_WORKERS=both/);
    expect(() => parseWorkers({ EMBERLOT_WORKERS: 'elect', EMBERLOT_INGEST_CLIENT_ID: 'rig-OV-01' })).toThrow(/EMBERLOT_INGEST_CLIENT_ID/);
  });
});
