/**
 * web: how the app loads on a phone. Debian's Chromium (playwright-core) at 390×844 with the CPU
 * slowed 4× (Chrome DevTools' CPU throttling, as a mid-range phone), against the bench's own API
 * serving the web export on loopback. Measured:
 * - coldSignInKb: bytes on the wire (compressed bodies + headers, CDP encodedDataLength) for a first
 *   visit to /sign-in with an empty cache, until the form shows and the network has been quiet 500 ms;
 * - signInPaintMs: navigation start → the e-mail field visible;
 * - signInToFloorMs / floorKb: pressing "Sign in" → the floor's summary line shows its rig count, and
 *   the bytes that took;
 * - floorReloadMs: reload of the signed-in floor (warm cache) → the summary line, median of 5 (and each);
 *   where that time goes, per reload (medians): main-thread script time (`floorReloadScriptMs`, CDP
 *   Performance ScriptDuration, slowed 4×), all main-thread tasks (`floorReloadTaskMs`), and when the
 *   session check and the floor's data were requested after the document (`floorReloadApiStartMs`).
 * Loopback has no network latency: these are CPU and byte figures, not a mobile-network model.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { chromium, type CDPSession, type Page } from 'playwright-core';
import { DEMO_USERS } from '../../server/seed/demo-data';
import { CHROMIUM, ensureChromium } from '../../tests/e2e/harness';
import { SEED_STEPS } from '../../server/seed/seed';
import type { BenchEnv } from '../lib/environment';

const VIEWPORT = { width: 390, height: 844 };
const CPU_SLOWDOWN = 4;
const RELOADS = 5;

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};
const kb = (bytes: number) => Math.round(bytes / 102.4) / 10;

/** Bytes on the wire per request, as Chromium counts them (headers + compressed body). */
class WireCounter {
  bytes = 0;
  requests = 0;
  inFlight = 0;
  lastActivity = Date.now();
  byType: Record<string, number> = {};
  /** Bytes per file (path without its content hash), as in `byType`. */
  byFile: Record<string, number> = {};
  private types = new Map<string, string>();
  private urls = new Map<string, string>();
  constructor(cdp: CDPSession) {
    cdp.on('Network.requestWillBeSent', (e) => {
      this.inFlight += 1;
      this.lastActivity = Date.now();
      this.types.set(e.requestId, e.type ?? 'Other');
      this.urls.set(e.requestId, e.request.url);
    });
    cdp.on('Network.loadingFinished', (e) => {
      this.inFlight = Math.max(0, this.inFlight - 1);
      this.lastActivity = Date.now();
      this.bytes += e.encodedDataLength;
      this.requests += 1;
      const t = this.types.get(e.requestId) ?? 'Other';
      this.byType[t] = (this.byType[t] ?? 0) + e.encodedDataLength;
      const url = this.urls.get(e.requestId);
      if (url) {
        const file = new URL(url).pathname.replace(/^.*\/(?!api\/)/, '').replace(/[-.][0-9a-f]{32}(?=\.)/, '') || '/';
        this.byFile[file] = (this.byFile[file] ?? 0) + e.encodedDataLength;
      }
    });
    cdp.on('Network.loadingFailed', () => {
      this.inFlight = Math.max(0, this.inFlight - 1);
      this.lastActivity = Date.now();
    });
  }
  reset() {
    this.bytes = 0;
    this.requests = 0;
    this.byType = {};
    this.byFile = {};
  }
  /** Resolves once no request has been open for `quietMs` (the floor's event stream is excluded by the caller). */
  async quiet(quietMs = 500, limitMs = 15_000): Promise<void> {
    const until = Date.now() + limitMs;
    while (Date.now() < until) {
      if (this.inFlight <= 1 && Date.now() - this.lastActivity >= quietMs) return;
      await new Promise((r) => setTimeout(r, 50));
    }
  }
}

async function floorReady(page: Page): Promise<void> {
  await page
    .getByTestId('floor-summary')
    .filter({ hasText: /\d+ of \d+ rigs online/ })
    .first()
    .waitFor({ state: 'visible', timeout: 60_000 });
}

export async function runWeb(b: BenchEnv, log: (l: string) => void) {
  ensureChromium();
  // Alone (EMBERLOT_BENCH_SCENARIOS=web) the bench has no rigs: give the floor the demo's six. After
  // the other scenarios it shows every rig they registered (reported as floorRigs).
  const count = async () => Number((await b.pool.query<{ n: string }>('SELECT count(*) AS n FROM rigs')).rows[0].n);
  if ((await count()) === 0) await SEED_STEPS.find((s) => s.name === 'rigs')!.run(b.ds);
  const floorRigs = await count();
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'emberlot-bench-web-'));
  const context = await chromium.launchPersistentContext(dir, {
    executablePath: CHROMIUM,
    headless: true,
    viewport: VIEWPORT,
    deviceScaleFactor: 1,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--disable-dev-shm-usage',
    ],
  });
  try {
    const page = context.pages()[0] ?? (await context.newPage());
    page.setDefaultTimeout(60_000);
    const cdp = await context.newCDPSession(page);
    await cdp.send('Network.enable');
    await cdp.send('Emulation.setCPUThrottlingRate', { rate: CPU_SLOWDOWN });
    const wire = new WireCounter(cdp);

    // Cold sign-in: empty profile, nothing cached.
    const t0 = Date.now();
    await page.goto(`${b.baseUrl}/sign-in`, { waitUntil: 'commit' });
    await page.getByLabel(/e-?mail/i).waitFor({ state: 'visible' });
    const signInPaintMs = Date.now() - t0;
    await wire.quiet();
    const coldSignIn = { bytes: wire.bytes, requests: wire.requests, byType: { ...wire.byType }, byFile: { ...wire.byFile } };

    // Sign in → floor.
    const op = DEMO_USERS.find((u) => u.role === 'operator')!;
    await page.getByLabel(/e-?mail/i).fill(op.email);
    await page.getByLabel(/password/i).fill(op.password);
    wire.reset();
    const t1 = Date.now();
    await page.getByRole('button', { name: /sign in/i }).click();
    await floorReady(page);
    const signInToFloorMs = Date.now() - t1;
    await wire.quiet();
    const floor = { bytes: wire.bytes, requests: wire.requests };

    // Reloads of the signed-in floor, warm cache.
    const reloads: number[] = [];
    const scriptMs: number[] = [];
    const taskMs: number[] = [];
    const apiStart: Record<string, number[]> = { me: [], floor: [] };
    let reloadBytes = 0;
    let reloadApiRequests: Record<string, number> = {};
    let reloadTimeline: Record<string, number> = {};
    await cdp.send('Performance.enable');
    const perf = async () => {
      const { metrics } = await cdp.send('Performance.getMetrics');
      const get = (name: string) => metrics.find((m) => m.name === name)?.value ?? 0;
      return { script: get('ScriptDuration'), task: get('TaskDuration') };
    };
    const sent: Array<{ url: string; type: string; at: number }> = [];
    cdp.on('Network.requestWillBeSent', (e) => sent.push({ url: e.request.url, type: e.type ?? 'Other', at: e.timestamp }));
    for (let i = 0; i < RELOADS; i++) {
      wire.reset();
      sent.length = 0;
      const before = await perf();
      const t = Date.now();
      await page.reload({ waitUntil: 'commit' });
      await floorReady(page);
      reloads.push(Date.now() - t);
      const after = await perf();
      // The metrics restart with the new document on a reload (deltas came out negative): take the
      // new document's own totals unless they kept counting from before.
      const fresh = after.task < before.task;
      scriptMs.push(Math.round((fresh ? after.script : after.script - before.script) * 1000));
      taskMs.push(Math.round((fresh ? after.task : after.task - before.task) * 1000));
      const doc = sent.find((r) => r.type === 'Document');
      const at = (re: RegExp) => sent.find((r) => re.test(new URL(r.url).pathname));
      for (const [key, re] of [
        ['me', /^\/api\/auth\/me$/],
        ['floor', /^\/api\/floor$/],
      ] as const) {
        const r = at(re);
        if (doc && r) apiStart[key].push(Math.round((r.at - doc.at) * 1000));
      }
      await wire.quiet();
      reloadBytes = wire.bytes;
      // Each API path and how often the reload asked for it: a preload the app's fetch did not take
      // shows as a 2.
      reloadApiRequests = {};
      // The last reload's requests, ms after the document's (API calls, scripts and fonts from cache).
      reloadTimeline = {};
      for (const r of sent) {
        const name = new URL(r.url).pathname.replace(/^.*\/(?!api\/)/, '').replace(/-[0-9a-f]{32}/, '');
        if (doc && !(name in reloadTimeline)) reloadTimeline[name] = Math.round((r.at - doc.at) * 1000);
      }
      for (const r of sent) {
        const p = new URL(r.url).pathname;
        if (p.startsWith('/api/')) reloadApiRequests[p] = (reloadApiRequests[p] ?? 0) + 1;
      }
    }
    // EMBERLOT_BENCH_WEB_PROFILE=<file>: one more reload under the CPU profiler (not counted), written
    // as a .cpuprofile for Chrome DevTools or a source-map walk (docs/performance-notes.md).
    const profileFile = process.env.EMBERLOT_BENCH_WEB_PROFILE;
    if (profileFile) {
      await cdp.send('Profiler.enable');
      await cdp.send('Profiler.setSamplingInterval', { interval: 200 });
      await cdp.send('Profiler.start');
      await page.reload({ waitUntil: 'commit' });
      await floorReady(page);
      const { profile } = await cdp.send('Profiler.stop');
      fs.writeFileSync(profileFile, JSON.stringify(profile));
      log(`web: CPU profile of one reload in ${profileFile}`);
    }
    const result = {
      viewport: `${VIEWPORT.width}x${VIEWPORT.height}`,
      floorRigs,
      cpuSlowdown: CPU_SLOWDOWN,
      coldSignInKb: kb(coldSignIn.bytes),
      coldSignInRequests: coldSignIn.requests,
      coldSignInKbByType: Object.fromEntries(Object.entries(coldSignIn.byType).map(([k, v]) => [k, kb(v)])),
      // Bytes per file (content hash removed): what scripts/web-size.ts sums without a browser.
      coldSignInBytesByFile: coldSignIn.byFile,
      signInPaintMs,
      signInToFloorMs,
      floorKb: kb(floor.bytes),
      floorRequests: floor.requests,
      floorReloadMs: median(reloads),
      floorReloadsMs: reloads,
      floorReloadKb: kb(reloadBytes),
      floorReloadApiRequests: reloadApiRequests,
      floorReloadTimelineMs: reloadTimeline,
      floorReloadScriptMs: median(scriptMs),
      floorReloadTaskMs: median(taskMs),
      floorReloadApiStartMs: {
        me: apiStart.me.length ? median(apiStart.me) : null,
        floor: apiStart.floor.length ? median(apiStart.floor) : null,
      },
    };
    log(
      `web: cold sign-in ${result.coldSignInKb} KB, paint ${signInPaintMs} ms, sign-in → floor ${signInToFloorMs} ms, floor reload median ${result.floorReloadMs} ms`,
    );
    return result;
  } finally {
    await context.close().catch(() => undefined);
    fs.rmSync(dir, { recursive: true, force: true });
  }
}
