// Node-side test files run against the throwaway cluster that scripts/test.ts started.
process.env.EMBERLOT_TEST_PG_PORT ??= '54339';
process.env.TZ = 'UTC';
