/**
 * The API's opt-in memory log (server/memory-log.ts, EMBERLOT_MEMORY_LOG_MS): off unless given a
 * positive interval; each line carries the process's memory in MB and the caller's gauges.
 */
import { memorySnapshot, startMemoryLog } from '../../server/memory-log';

test('off for 0, a missing or a non-number interval', async () => {
  const lines: string[] = [];
  const stops = [0, Number(undefined), -5].map((ms) =>
    startMemoryLog(
      ms,
      () => ({}),
      (l) => lines.push(l),
    ),
  );
  await new Promise((r) => setTimeout(r, 60));
  stops.forEach((stop) => stop());
  expect(lines).toEqual([]);
});

test('one line per tick with rss, heap and the gauges; nothing after stop', async () => {
  const lines: string[] = [];
  const stop = startMemoryLog(
    10,
    () => ({ protectionBacklog: 42 }),
    (l) => lines.push(l),
  );
  for (let waited = 0; lines.length < 2 && waited < 3000; waited += 20) await new Promise((r) => setTimeout(r, 20));
  stop();
  const n = lines.length;
  expect(n).toBeGreaterThanOrEqual(2);
  const row = JSON.parse(lines[0].replace(/^\[api\] memory /, '')) as Record<string, number>;
  expect(row.protectionBacklog).toBe(42);
  // MB, as process.memoryUsage() reports them in bytes.
  expect(row.rss).toBeCloseTo(process.memoryUsage().rss / 1024 / 1024, -2);
  expect(row.heapUsed).toBeLessThanOrEqual(row.heapTotal);
  expect(row.newSpace + row.oldSpace + row.otherSpaces).toBeCloseTo(row.heapTotal, -1);
  await new Promise((r) => setTimeout(r, 40));
  expect(lines.length).toBe(n);
  expect(memorySnapshot().rss).toBeGreaterThan(0);
});
