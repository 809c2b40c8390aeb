/**
 * The simulator honours a trip reset as the server sends it (server/modules/protection/
 * trip-reset.service.ts): `reset-trip` clears the latch and leaves bias off, then a `bias` command
 * for that socket alone re-energises it with the plan's settings; a command's cmdId is applied once.
 */
import { CommandDesk, applyCommand } from '../../rig-simulator/commands';
import { DEMO_LOTS, createRigState, makeLotDevices, stepRig } from '../../rig-simulator/physics';

const [d0, d1, d2] = makeLotDevices(DEMO_LOTS[0], 3);
const reverse = createRigState({
  rigCode: 'OV-01',
  chamberC: 125,
  sockets: [d0, d1, d2].map((device) => ({ device, mode: 'reverse' as const, vV: 160, biasOn: true })),
});

test('trip, reset-trip, then bias on for that socket: energised again, its neighbours untouched', () => {
  const tripped = applyCommand(reverse, { v: 1, cmdId: 't1', type: 'trip', socket: 1, reason: 'runaway' }).state;
  expect(stepRig(tripped, 10).sockets[1].iA).toBe(0);
  const reset = applyCommand(tripped, { v: 1, cmdId: 'r1', type: 'reset-trip', socket: 1 });
  expect(reset.ok).toBe(true);
  // Still off after the reset alone: the rig never re-applies bias by itself.
  expect(stepRig(reset.state, 10).sockets[1]).toMatchObject({ tripped: false, biasOn: false, iA: 0 });
  const on = applyCommand(reset.state, { v: 1, cmdId: 'b1', type: 'bias', sockets: [1], on: true, vV: 160 });
  expect(on.ok).toBe(true);
  const after = stepRig(on.state, 10);
  expect(after.sockets[1]).toMatchObject({ tripped: false, biasOn: true, vOutV: 160 });
  // Leakage flows again (nA at 125 °C: 10 nA · 2^10 ≈ 10 µA, doubling per 10 °C — common practice).
  expect(after.sockets[1].iA).toBeGreaterThan(1e-6);
  expect(after.sockets[0]).toMatchObject({ biasOn: true, tripped: false });
  expect(after.sockets[2]).toMatchObject({ biasOn: true, tripped: false });
});

test('the rig desk applies a reset cmdId once: a repeat is answered, not applied again', () => {
  const desk = new CommandDesk();
  const tripped = applyCommand(reverse, { v: 1, cmdId: 't2', type: 'trip', socket: 2, reason: 'runaway' }).state;
  const cmd = (o: object) => Buffer.from(JSON.stringify({ v: 1, ts: new Date().toISOString(), ...o }));
  const first = desk.handle(cmd({ cmdId: 'reset:x:2:1', type: 'reset-trip', socket: 2 }), tripped);
  expect(first).toMatchObject({ kind: 'answered', ok: true, repeat: false });
  if (first.kind !== 'answered') throw new Error('not answered');
  const biased = desk.handle(cmd({ cmdId: 'reenergise:x:2:1', type: 'bias', sockets: [2], on: true, vV: 160 }), first.state);
  if (biased.kind !== 'answered') throw new Error('not answered');
  expect(biased.state.sockets[2]).toMatchObject({ tripped: false, biasOn: true });
  // The same reset again (a retry): answered ok, bias stays on.
  const again = desk.handle(cmd({ cmdId: 'reset:x:2:1', type: 'reset-trip', socket: 2 }), biased.state);
  expect(again).toMatchObject({ kind: 'answered', ok: true, repeat: true });
  if (again.kind !== 'answered') throw new Error('not answered');
  expect(again.state.sockets[2].biasOn).toBe(true);
});
