/**
 * TurnGate (server/modules/protection/turns.ts): waiters resolve in arrival order, in later turns of
 * the event loop, no more per turn than max(perTurn, ⌈backlog / 4⌉), and all of them eventually.
 * The turns are counted with a setImmediate chain started before the waiters (one link per turn).
 */
import { TurnGate } from '../../server/modules/protection/turns';

async function releasedPerTurn(
  perTurn: number,
  waiters: number,
  backlog?: () => number,
): Promise<{ order: number[]; perTurnCounts: number[] }> {
  const gate = new TurnGate(perTurn, backlog);
  const order: number[] = [];
  let turn = 0;
  const counts: number[] = [];
  let running = true;
  const tick = () => {
    turn++;
    if (running) setImmediate(tick);
  };
  setImmediate(tick);
  const all = Array.from({ length: waiters }, (_, k) =>
    gate.next().then(() => {
      order.push(k);
      counts[turn] = (counts[turn] ?? 0) + 1;
    }),
  );
  expect(order).toEqual([]); // nothing in the current turn
  await Promise.all(all);
  running = false;
  expect(gate.waiting).toBe(0);
  return { order, perTurnCounts: counts.filter((c) => c !== undefined) };
}

test('a small burst: every waiter released, in order, at most perTurn per turn', async () => {
  const { order, perTurnCounts } = await releasedPerTurn(6, 20);
  expect(order).toEqual(Array.from({ length: 20 }, (_, k) => k));
  expect(perTurnCounts).toEqual([6, 6, 6, 2]);
});

test('a large backlog: a quarter of it per turn, so it drains in a few dozen turns, not hundreds', async () => {
  const { order, perTurnCounts } = await releasedPerTurn(6, 1000);
  expect(order).toEqual(Array.from({ length: 1000 }, (_, k) => k));
  expect(perTurnCounts[0]).toBe(250);
  expect(perTurnCounts[1]).toBe(188); // ⌈750 / 4⌉
  for (const c of perTurnCounts) expect(c).toBeLessThanOrEqual(250);
  expect(perTurnCounts.length).toBeLessThan(30);
});

test('a backlog kept by the caller (one waiter per rig, thousands queued behind them) sets the pace, not the gate’s own queue', async () => {
  // 40 rigs with 4,000 messages waiting behind their heads: a quarter of 4,000 is more than 40,
  // so every rig's head goes in the first turn (the gate's own queue alone would allow 10).
  const alone = await releasedPerTurn(6, 40);
  expect(alone.perTurnCounts).toEqual([10, 8, 6, 6, 6, 4]);
  const { order, perTurnCounts } = await releasedPerTurn(6, 40, () => 4_000);
  expect(order).toEqual(Array.from({ length: 40 }, (_, k) => k));
  expect(perTurnCounts).toEqual([40]);
  // A small backlog outside changes nothing.
  expect((await releasedPerTurn(6, 40, () => 0)).perTurnCounts).toEqual([10, 8, 6, 6, 6, 4]);
});
