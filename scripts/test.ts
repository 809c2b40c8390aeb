/**
 * `npm test`: a throwaway PostgreSQL cluster (never the demo data), the schema migrated once
 * into a template database that each test file clones, then every jest project, then the
 * browser journeys (tests/e2e) when present. Ends with one summary line: "Tests: N passed, N failed".
 *
 * Flags: --no-e2e (skip the browser journeys), anything else goes to jest.
 */
import 'reflect-metadata';
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { dbConfigFromEnv } from '../server/config';
import { createDataSource } from '../server/db/data-source';
import { destroyCluster, ensureDatabase, PROJECT_ROOT, startCluster } from './pg-cluster';
import { ensureRedisInstalled } from './redis-server';

const TEST_PORT = Number(process.env.EMBERLOT_TEST_PG_PORT ?? 54339);
/** Parallel runs (several developers' helpers on one machine) each set their own EMBERLOT_TEST_PG_PORT. */
export const TEST_PG = { name: TEST_PORT === 54339 ? 'test' : `test-${TEST_PORT}`, port: TEST_PORT, fast: true };
export const TEMPLATE_DB = 'emberlot_template';

async function main(): Promise<number> {
  const args = process.argv.slice(2);
  const skipE2e = args.includes('--no-e2e') || process.env.EMBERLOT_SKIP_E2E === '1';
  const jestArgs = args.filter((a) => a !== '--no-e2e');
  const t0 = Date.now();

  // The broker-cluster tests (tests/broker/cluster-*.test.ts) start their own Redis: install
  // Debian's redis-server now (as pg-cluster.ts does postgresql) when this run includes them.
  if (jestArgs.every((a) => a.startsWith('-')) || jestArgs.some((a) => /cluster/.test(a))) ensureRedisInstalled();
  destroyCluster({ ...TEST_PG, quiet: true });
  const pg = startCluster(TEST_PG);
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    EMBERLOT_TEST_PG_PORT: String(pg.port),
    EMBERLOT_DB_PORT: String(pg.port),
    EMBERLOT_DB_NAME: TEMPLATE_DB,
  };
  let passed = 0;
  let failed = 0;
  try {
    await ensureDatabase(pg, TEMPLATE_DB);
    const ds = createDataSource(dbConfigFromEnv(env));
    await ds.initialize();
    await ds.destroy();
    console.log(`[test] PostgreSQL ready with migrated template in ${Date.now() - t0} ms`);

    const results = path.join(PROJECT_ROOT, '.data', `jest-results-${TEST_PORT}.json`);
    fs.mkdirSync(path.dirname(results), { recursive: true });
    fs.rmSync(results, { force: true });
    const jest = spawnSync(
      process.execPath,
      [require.resolve('jest/bin/jest'), '--ci', '--maxWorkers=2', '--json', '--outputFile', results, ...jestArgs],
      { cwd: PROJECT_ROOT, stdio: 'inherit', env },
    );
    if (fs.existsSync(results)) {
      const r = JSON.parse(fs.readFileSync(results, 'utf8'));
      passed += r.numPassedTests;
      failed += r.numFailedTests + (r.numRuntimeErrorTestSuites ?? 0);
    } else failed += 1;
    if (jest.status !== 0 && failed === 0) failed += 1;

    const e2e = path.join(PROJECT_ROOT, 'tests', 'e2e', 'run-e2e.ts');
    if (!skipE2e && jestArgs.length === 0 && fs.existsSync(e2e)) {
      const out = path.join(PROJECT_ROOT, '.data', 'e2e-results.json');
      fs.rmSync(out, { force: true });
      const r = spawnSync(process.execPath, ['-r', '@swc-node/register', e2e], {
        cwd: PROJECT_ROOT,
        stdio: 'inherit',
        env: { ...env, EMBERLOT_E2E_RESULTS: out },
      });
      if (fs.existsSync(out)) {
        const e = JSON.parse(fs.readFileSync(out, 'utf8'));
        passed += e.passed;
        failed += e.failed;
      } else failed += 1;
      if (r.status !== 0 && !fs.existsSync(out)) failed += 1;
    }
  } finally {
    destroyCluster({ ...TEST_PG, quiet: true });
  }
  console.log(`[test] finished in ${Math.round((Date.now() - t0) / 1000)} s`);
  console.log(`Tests: ${passed} passed, ${failed} failed`);
  return failed === 0 ? 0 : 1;
}

main().then(
  (code) => process.exit(code),
  (e) => {
    console.error('[test] failed to run:', e);
    console.log('Tests: 0 passed, 1 failed');
    process.exit(1);
  },
);
