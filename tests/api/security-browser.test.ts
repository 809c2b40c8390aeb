/**
 * Issue #18, points 2 and 10, in real Chromium (Debian's, through playwright-core as the browser
 * journeys use it) against the real app and PostgreSQL:
 *  - a page served from another port of 127.0.0.1 auto-submits a form to the API while the admin is
 *    signed in (the browser sends the cookie: same site), and posts a multipart upload with fetch:
 *    both refused, nothing changed;
 *  - a file with a non-ASCII name uploaded by the browser is stored under that name.
 */
import * as http from 'node:http';
import type { AddressInfo } from 'node:net';
import type { BrowserContext, Page } from 'playwright-core';
import { AuditLogEntity, DeviceEntity, RigEntity } from '../../server/db/entities';
import { SESSION_COOKIE } from '../../server/http/route';
import type { RigLink } from '../../server/modules/telemetry/contracts';
import { ensureChromium, openBrowser } from '../e2e/harness';
import { createTestApp, emailFor, TEST_PASSWORD, type TestApp } from '../support/api';
import { insertTestRig, tableCounts } from '../support/db';
import { createRunFixture } from '../support/fuzz';

const fakeLink: RigLink = { send: async () => ({ ok: true }) as never, connected: () => true, revoke: async () => true };

interface Seen {
  method: string;
  url: string;
  origin?: string;
  hadCookie: boolean;
  status?: number;
}

let t: TestApp;
let api: http.Server;
let evil: http.Server;
let apiUrl = '';
let evilUrl = '';
let browser: BrowserContext;
let page: Page;
let lotId = '';
const seen: Seen[] = [];
const RIG = 'XB-01';

const listen = (s: http.Server) =>
  new Promise<string>((resolve) => s.listen(0, '127.0.0.1', () => resolve(`http://127.0.0.1:${(s.address() as AddressInfo).port}`)));

beforeAll(async () => {
  ensureChromium();
  t = await createTestApp();
  t.ctx.services.rigLink = fakeLink;
  await insertTestRig(t.ctx.ds, RIG);
  lotId = (await createRunFixture(t, 'XB')).lotId;
  api = http.createServer((req, res) => {
    const s: Seen = {
      method: req.method!,
      url: req.url!,
      origin: req.headers.origin,
      hadCookie: (req.headers.cookie ?? '').includes(`${SESSION_COOKIE}=`),
    };
    if (req.method !== 'GET') seen.push(s);
    res.on('finish', () => (s.status = res.statusCode));
    t.app(req, res);
  });
  apiUrl = await listen(api);
  // The attacker's page: same host, another port (same site, another origin).
  evil = http.createServer((req, res) => {
    res.setHeader('Content-Type', 'text/html; charset=utf-8');
    if (req.url === '/form') {
      res.end(`<!doctype html><form id="f" method="POST" action="${apiUrl}/api/rigs/${RIG}/credentials"></form>
        <script>document.getElementById('f').submit()</script>`);
    } else res.end('<!doctype html><title>another app on this host</title>');
  });
  evilUrl = await listen(evil);
  browser = await openBrowser('wide');
  page = browser.pages()[0] ?? (await browser.newPage());
  page.setDefaultTimeout(15_000);
  // The admin signs in on the app's own origin; the browser keeps the session cookie.
  await page.goto(`${apiUrl}/api/health`);
  const status = await page.evaluate(
    async ([email, password]) => {
      const r = await fetch('/api/auth/sign-in', {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ email, password }),
      });
      return r.status;
    },
    [emailFor('admin'), TEST_PASSWORD],
  );
  expect(status).toBe(200);
}, 90_000);

afterAll(async () => {
  await browser?.close();
  await new Promise((r) => evil?.close(r));
  await new Promise((r) => api?.close(r));
  await t?.close();
});

it("a form auto-submitted from another port of 127.0.0.1, with the admin's cookie, does not rotate the rig secret", async () => {
  const before = await tableCounts(t.ctx.ds);
  const hash = (await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: RIG })).mqttSecretHash;
  seen.length = 0;
  await page.goto(`${evilUrl}/form`);
  await page.waitForURL(`${apiUrl}/api/rigs/${RIG}/credentials`);
  const body = JSON.parse((await page.locator('body').innerText()).trim());
  expect(body.error.code).toBe('forbidden');
  expect(body.error.message).toBe(
    `Cross-site request refused: changes are only accepted from Emberlot's own pages (${apiUrl}), not from ${evilUrl}.`,
  );
  // The browser did send the cookie (SameSite=Lax allows a same-site POST): the origin check stopped it.
  expect(seen).toEqual([{ method: 'POST', url: `/api/rigs/${RIG}/credentials`, origin: evilUrl, hadCookie: true, status: 403 }]);
  expect((await t.ctx.ds.getRepository(RigEntity).findOneByOrFail({ code: RIG })).mqttSecretHash).toBe(hash);
  expect(await tableCounts(t.ctx.ds)).toEqual(before);
}, 60_000);

it('a multipart upload fetched from the other port (no-cors, with credentials) is refused and stores nothing', async () => {
  // The engineer may add serials: signed in as the engineer, the refusal can only come from the origin check.
  await page.goto(`${apiUrl}/api/health`);
  const signIn = await page.evaluate(
    async ([email, password]) => {
      const r = await fetch('/api/auth/sign-in', {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ email, password }),
      });
      return r.status;
    },
    [emailFor('engineer'), TEST_PASSWORD],
  );
  expect(signIn).toBe(200);
  const before = await tableCounts(t.ctx.ds);
  seen.length = 0;
  await page.goto(`${evilUrl}/`);
  await page.evaluate(async (url) => {
    const fd = new FormData();
    fd.append('file', new File(['serial\nXB9001\nXB9002\n'], 'serials.csv', { type: 'text/csv' }));
    // The request goes out; the answer is withheld from this page (Cross-Origin-Resource-Policy).
    await fetch(url, { method: 'POST', mode: 'no-cors', credentials: 'include', body: fd }).catch(() => undefined);
  }, `${apiUrl}/api/lots/${lotId}/serials/csv`);
  // no-cors gives the page an opaque answer: read what the server saw and answered instead.
  for (const until = Date.now() + 10_000; seen[0]?.status === undefined && Date.now() < until;) await new Promise((r) => setTimeout(r, 50));
  expect(seen).toHaveLength(1);
  expect(seen[0].status).toBe(403);
  expect(seen[0]).toMatchObject({ method: 'POST', origin: evilUrl, hadCookie: true });
  expect(await tableCounts(t.ctx.ds)).toEqual(before);
}, 60_000);

it('a file named "Prüfung Los Ä-Ø №7.csv" uploaded by the browser is stored under that name', async () => {
  await page.goto(`${apiUrl}/api/health`);
  const name = 'Prüfung Los Ä-Ø №7.csv';
  await page.setContent(`<input type="file" id="csv">`);
  // setContent keeps the page's origin (the API's), so the upload below is a same-origin one.
  await page.setInputFiles('#csv', { name, mimeType: 'text/csv', buffer: Buffer.from('serial\nXB9101\nXB9102\n') });
  const res = await page.evaluate(
    async ([email, password, url]) => {
      const signIn = await fetch('/api/auth/sign-in', {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ email, password }),
      });
      const fd = new FormData();
      // Runs in the page (a DOM); this file is type-checked without the DOM library.
      const input = (globalThis as unknown as { document: { getElementById(id: string): { files: Blob[] } } }).document.getElementById(
        'csv',
      );
      fd.append('file', input.files[0]);
      const up = await fetch(url, { method: 'POST', body: fd });
      return { signIn: signIn.status, upload: up.status, body: await up.text() };
    },
    [emailFor('engineer'), TEST_PASSWORD, `/api/lots/${lotId}/serials/csv`],
  );
  expect(res.signIn).toBe(200);
  expect(res.upload).toBe(200);
  const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'lot.serials.add', entityId: lotId });
  expect((audit.details as { fileName: string }).fileName).toBe(name);
  expect(await t.ctx.ds.getRepository(DeviceEntity).countBy({ lotId })).toBeGreaterThanOrEqual(2);
}, 60_000);
