/**
 * `npm run test:e2e` (also the last part of `npm test`): builds the web export when its sources
 * changed, starts PostgreSQL (unless npm test already did), a fresh demo database and the whole
 * stack on ports of its own, and drives every role's journey at phone and wide size.
 * Writes {passed, failed, failures} to $EMBERLOT_E2E_RESULTS and prints "N passed, N failed".
 */
import 'reflect-metadata';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { configFromEnv } from '../../server/config';
import { createDataSource } from '../../server/db/data-source';
import { seedIfEmpty } from '../../server/seed/seed';
import { destroyCluster, dropDatabase, ensureDatabase, PROJECT_ROOT, startCluster, type ClusterInfo } from '../../scripts/pg-cluster';
import { writeDemoFleet } from '../../scripts/demo-fleet';
import { startStack } from '../../scripts/stack';
import { ensureWebExport, WEB_DIR } from '../../scripts/web-export';
import { ensureChromium, makeContext, openBrowser, SCREENSHOT_DIR, SIZES, type Journey, type SizeName } from './harness';
import { JOURNEYS } from './journeys';

/** Parallel runs on one machine set EMBERLOT_E2E_PORT_BASE (api = base, mqtt = base + 1, smtp = base + 2). */
const E2E_BASE = Number(process.env.EMBERLOT_E2E_PORT_BASE ?? 0);
const E2E_PORTS = E2E_BASE ? { api: E2E_BASE, mqtt: E2E_BASE + 1, smtp: E2E_BASE + 2 } : { api: 4790, mqtt: 18840, smtp: 2536 };

async function main(): Promise<number> {
  const t0 = Date.now();
  ensureChromium();
  ensureWebExport();

  const ownCluster = !process.env.EMBERLOT_TEST_PG_PORT;
  const pgOpts = E2E_BASE ? { name: `e2e-${E2E_BASE}`, port: E2E_BASE + 3, fast: true } : { name: 'e2e', port: 54347, fast: true };
  let pg: ClusterInfo;
  if (ownCluster) pg = startCluster(pgOpts);
  else
    pg = {
      host: '127.0.0.1',
      port: Number(process.env.EMBERLOT_TEST_PG_PORT),
      user: 'emberlot',
      password: process.env.EMBERLOT_DB_PASSWORD ?? 'emberlot-local-only',
      socketDir: '',
      dataDir: '',
      logFile: '',
    };
  const dbName = `emberlot_e2e_${process.pid}`;
  await dropDatabase(pg, dbName);
  await ensureDatabase(pg, dbName);
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    EMBERLOT_DB_PORT: String(pg.port),
    EMBERLOT_DB_NAME: dbName,
    EMBERLOT_PORT: String(E2E_PORTS.api),
    EMBERLOT_MQTT_PORT: String(E2E_PORTS.mqtt),
    EMBERLOT_SMTP_PORT: String(E2E_PORTS.smtp),
    EMBERLOT_WEB_DIR: WEB_DIR,
    // Every journey signs roles in from this one address: the per-address limit (30 per 15 min)
    // would stop the later journeys. The limit itself is tested in tests/api/security-throttle.test.ts.
    EMBERLOT_SIGN_IN_MAX_PER_WINDOW: '1000',
    EMBERLOT_SIM_CONFIG: path.join(PROJECT_ROOT, '.data', `e2e-fleet-${process.pid}.json`),
    // This stack's own secrets: its cluster's password, the rest generated into a file of its own.
    EMBERLOT_DB_PASSWORD: pg.password,
    EMBERLOT_SECRETS_FILE: path.join(PROJECT_ROOT, '.data', `e2e-${E2E_BASE || 'default'}`, 'secrets.json'),
  };
  const ds = createDataSource(configFromEnv(env).db);
  await ds.initialize();
  await seedIfEmpty(ds, () => undefined);
  await writeDemoFleet(ds, env.EMBERLOT_SIM_CONFIG!);
  await ds.destroy();

  const stack = await startStack({ env, echo: process.env.EMBERLOT_E2E_VERBOSE === '1' });
  const baseUrl = `http://127.0.0.1:${E2E_PORTS.api}`;
  fs.rmSync(SCREENSHOT_DIR, { recursive: true, force: true });

  const failures: string[] = [];
  const a11y: string[] = [];
  let passed = 0;
  const only = process.env.EMBERLOT_E2E_ONLY;
  try {
    for (const journey of JOURNEYS as Journey[]) {
      if (only && !only.split(',').some((n) => n && journey.name.includes(n.trim()))) continue;
      for (const size of Object.keys(SIZES) as SizeName[]) {
        const browser = await openBrowser(size);
        const page = browser.pages()[0] ?? (await browser.newPage());
        page.setDefaultTimeout(15000);
        const consoleErrors: string[] = [];
        page.on('pageerror', (e) => consoleErrors.push(String(e)));
        const started = Date.now();
        try {
          await journey.run(makeContext(baseUrl, E2E_PORTS.mqtt, size, journey.name, page, a11y));
          if (consoleErrors.length) throw new Error(`uncaught page errors: ${consoleErrors.slice(0, 3).join(' | ')}`);
          passed += 1;
          console.log(`[e2e] ✓ ${journey.name} @${size} (${((Date.now() - started) / 1000).toFixed(1)} s)`);
        } catch (e) {
          const msg = `${journey.name} @${size}: ${e instanceof Error ? e.message.split('\n')[0] : String(e)}`;
          failures.push(msg);
          console.log(`[e2e] ✗ ${msg}`);
          await page.screenshot({ path: path.join(SCREENSHOT_DIR, size, `${journey.name}-FAILED.png`) }).catch(() => undefined);
        } finally {
          await browser.close();
        }
      }
    }
  } finally {
    await stack.stop();
    await dropDatabase(pg, dbName).catch(() => undefined);
    if (ownCluster) destroyCluster({ ...pgOpts, quiet: true });
    fs.rmSync(env.EMBERLOT_SIM_CONFIG!, { force: true });
  }
  if (a11y.length) console.log(`[e2e] moderate and minor accessibility findings:\n  ${[...new Set(a11y)].join('\n  ')}`);
  const result = { passed, failed: failures.length, failures, seconds: Math.round((Date.now() - t0) / 1000) };
  if (process.env.EMBERLOT_E2E_RESULTS) fs.writeFileSync(process.env.EMBERLOT_E2E_RESULTS, JSON.stringify(result));
  console.log(`[e2e] screenshots in ${path.relative(PROJECT_ROOT, SCREENSHOT_DIR)}/`);
  console.log(`e2e: ${passed} passed, ${failures.length} failed`);
  return failures.length ? 1 : 0;
}

main().then(
  (c) => process.exit(c),
  (e) => {
    console.error('[e2e] could not run:', e);
    if (process.env.EMBERLOT_E2E_RESULTS)
      fs.writeFileSync(process.env.EMBERLOT_E2E_RESULTS, JSON.stringify({ passed: 0, failed: 1, failures: [String(e)] }));
    console.log('e2e: 0 passed, 1 failed');
    process.exit(1);
  },
);
