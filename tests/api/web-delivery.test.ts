/**
 * How the web app and the API's JSON travel (server/http/web-static.ts, scripts/web-export.ts):
 * precompressed brotli/gzip for the export, on-the-fly compression for /api JSON, a year's immutable
 * cache only for content-hashed names, never a cache for index.html or the API, and the live stream
 * left uncompressed. Runs against a small export written here (the real one takes minutes to build);
 * the bench's `web` scenario measures the real one in Chromium.
 */
import * as fs from 'node:fs';
import * as http from 'node:http';
import type { AddressInfo } from 'node:net';
import * as os from 'node:os';
import * as path from 'node:path';
import * as zlib from 'node:zlib';
import request from 'supertest';
import { cacheControlFor, IMMUTABLE, NEVER } from '../../server/http/web-static';
import { precompress } from '../../scripts/web-export';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';

const HASH = 'ccab4de4d8e4c940886ec293b15b8fdf';
const SCRIPT = `/_expo/static/js/web/entry-${HASH}.js`;
const FONT = `/assets/fonts/Lexend_400Regular.f893f92c779f40e474d325a7242d1c4c.woff2`;
const body = `console.log(${JSON.stringify('Emberlot '.repeat(4000))});`;

let t: TestApp;
let webDir: string;
let server: http.Server;
let port: number;
beforeAll(async () => {
  webDir = fs.mkdtempSync(path.join(os.tmpdir(), 'emberlot-web-'));
  const write = (rel: string, data: string | Buffer) => {
    fs.mkdirSync(path.dirname(path.join(webDir, rel)), { recursive: true });
    fs.writeFileSync(path.join(webDir, rel), data);
  };
  write(
    'index.html',
    `<!DOCTYPE html><html><head><title>Emberlot</title></head><body><div id="root"></div><script src="${SCRIPT}" defer></script>${'<!-- pad -->'.repeat(200)}</body></html>`,
  );
  write(SCRIPT, body);
  write(FONT, Buffer.from([0x77, 0x4f, 0x46, 0x32, 1, 2, 3, 4]));
  write('favicon.ico', Buffer.alloc(2000, 7));
  const c = precompress(webDir);
  expect(c.files).toBeGreaterThanOrEqual(3);
  t = await createTestApp({ webDir });
  server = t.app.listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  port = (server.address() as AddressInfo).port;
});
afterAll(async () => {
  await new Promise((r) => server?.close(r));
  await t?.close();
  fs.rmSync(webDir, { recursive: true, force: true });
});

describe('precompressed export', () => {
  it('writes brotli and gzip twins that decode to the original', () => {
    const file = path.join(webDir, SCRIPT);
    const raw = fs.readFileSync(file);
    expect(zlib.brotliDecompressSync(fs.readFileSync(`${file}.br`)).equals(raw)).toBe(true);
    expect(zlib.gunzipSync(fs.readFileSync(`${file}.gz`)).equals(raw)).toBe(true);
    expect(fs.statSync(`${file}.br`).size).toBeLessThan(raw.length / 10);
  });

  it('sends brotli to a browser that takes it, gzip to one that takes only gzip, plain otherwise', async () => {
    const br = await rawGet(SCRIPT, { 'Accept-Encoding': 'gzip, deflate, br' });
    expect(br.status).toBe(200);
    expect(br.headers['content-encoding']).toBe('br');
    expect(br.headers['content-type']).toMatch(/javascript/);
    expect(zlib.brotliDecompressSync(br.body).toString()).toBe(body);

    const gz = await rawGet(SCRIPT, { 'Accept-Encoding': 'gzip' });
    expect(gz.headers['content-encoding']).toBe('gzip');
    expect(zlib.gunzipSync(gz.body).toString()).toBe(body);

    const plain = await rawGet(SCRIPT, { 'Accept-Encoding': 'identity' });
    expect(plain.headers['content-encoding']).toBeUndefined();
    expect(plain.body.toString()).toBe(body);
  });
});

describe('cache headers', () => {
  it('caches content-hashed files for a year as immutable', async () => {
    for (const url of [SCRIPT, FONT]) {
      const res = await request(t.app).get(url).set('Accept-Encoding', 'br');
      expect(res.status).toBe(200);
      expect(res.headers['cache-control']).toBe('public, max-age=31536000, immutable');
      // Never revalidated, so no validators (bytes on every response of a first visit).
      expect(res.headers.etag).toBeUndefined();
      expect(res.headers['last-modified']).toBeUndefined();
    }
  });

  it('never caches the app shell, unhashed files or the API', async () => {
    for (const url of ['/', '/floor', '/trends/lots/abc', '/favicon.ico']) {
      const res = await request(t.app).get(url).set('Accept-Encoding', 'br');
      expect(res.status).toBe(200);
      expect(res.headers['cache-control']).toBe('no-store');
    }
    const shell = await rawGet('/floor', { 'Accept-Encoding': 'gzip, br' });
    expect(shell.headers['content-encoding']).toBe('br');
    expect(shell.headers['content-type']).toMatch(/text\/html/);
    expect(zlib.brotliDecompressSync(shell.body).toString()).toContain('<div id="root">');

    const me = await request(t.app).get('/api/auth/me');
    expect(me.status).toBe(401);
    expect(me.headers['cache-control']).toBe('no-store');
  });

  it('names a hashed file only when Expo’s 32-hex content hash ends its name', () => {
    expect(cacheControlFor(`entry-${HASH}.js`)).toBe(IMMUTABLE);
    expect(cacheControlFor(`back-icon.${HASH}@2x.png`)).toBe(IMMUTABLE);
    expect(cacheControlFor('index.html')).toBe(NEVER);
    expect(cacheControlFor('favicon.ico')).toBe(NEVER);
    expect(cacheControlFor('entry-1234.js')).toBe(NEVER);
  });
});

describe('API compression', () => {
  it('compresses a JSON answer above 1 KB with brotli when asked; the body is the same JSON', async () => {
    const cookie = await sessionCookie('engineer');
    const plain = await rawGet('/api/plans/templates', { 'Accept-Encoding': 'identity', Cookie: cookie });
    expect(plain.status).toBe(200);
    expect(plain.headers['content-encoding']).toBeUndefined();
    const json = plain.body.toString();
    expect(json.length).toBeGreaterThan(1024);

    const br = await rawGet('/api/plans/templates', { 'Accept-Encoding': 'gzip, br', Cookie: cookie });
    expect(br.headers['content-encoding']).toBe('br');
    expect(br.headers['cache-control']).toBe('no-store');
    const decoded = zlib.brotliDecompressSync(br.body).toString();
    expect(decoded).toBe(json);
    expect(br.body.length).toBeLessThan(json.length / 2);
  });

  it('leaves an answer under 1 KB and the live floor stream uncompressed', async () => {
    const small = await request(t.app).get('/api/auth/me').set('Accept-Encoding', 'br');
    expect(small.status).toBe(401);
    expect(small.headers['content-encoding']).toBeUndefined();

    const cookie = await sessionCookie('operator');
    const headers = await new Promise<http.IncomingHttpHeaders>((resolve, reject) => {
      const req = http.get(
        {
          host: '127.0.0.1',
          port,
          path: '/api/floor/stream',
          headers: { Accept: 'text/event-stream', 'Accept-Encoding': 'br, gzip', Cookie: cookie },
        },
        (res) => {
          resolve(res.headers);
          req.destroy();
        },
      );
      req.on('error', (e) => (e.message.includes('aborted') || e.message.includes('socket hang up') ? undefined : reject(e)));
    });
    expect(headers['content-type']).toMatch(/^text\/event-stream/);
    expect(headers['content-encoding']).toBeUndefined();
  });
});

describe('early data for a signed-in reload (Link: rel=preload)', () => {
  const preload = (u: string) => `<${u}>; rel=preload; as=fetch; crossorigin=use-credentials`;

  it('asks a signed-in floor reload to fetch the session and the floor with the document', async () => {
    const cookie = await sessionCookie('operator');
    const res = await request(t.app).get('/floor').set('Cookie', cookie);
    expect(res.status).toBe(200);
    expect(res.headers.link).toBe(`${preload('/api/auth/me')}, ${preload('/api/floor')}`);
  });

  it('asks only for the session on a page without known first data, and nothing for a stranger', async () => {
    const cookie = await sessionCookie('engineer');
    expect((await request(t.app).get('/plans/abc').set('Cookie', cookie)).headers.link).toBe(preload('/api/auth/me'));
    const stranger = await request(t.app).get('/floor');
    expect(stranger.status).toBe(200);
    expect(stranger.headers.link).toBeUndefined();
  });
});

async function sessionCookie(role: 'engineer' | 'operator'): Promise<string> {
  const res = await request(t.app)
    .post('/api/auth/sign-in')
    .send({ email: emailFor(role), password: TEST_PASSWORD });
  expect(res.status).toBe(200);
  return ((res.headers['set-cookie'] as unknown as string[]) ?? []).map((c) => c.split(';')[0]).join('; ');
}

/** The bytes as they travel (supertest would decode them first). */
function rawGet(
  urlPath: string,
  headers: http.OutgoingHttpHeaders,
): Promise<{ status: number; headers: http.IncomingHttpHeaders; body: Buffer }> {
  return new Promise((resolve, reject) => {
    const req = http.get({ host: '127.0.0.1', port, path: urlPath, headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
    });
    req.on('error', reject);
  });
}
