/**
 * The scheduler's CommandTracker (server/modules/scheduler/commands.ts): a rig report taken before
 * a command of the same type reached the rig must not count as "already done". The scenario is the
 * one a fault test caught: a read-hold's cool-down set point still in flight (or applied and acked,
 * but not yet in a stored report) when the run resumes; the report still shows the test set point,
 * so the heat command looked satisfied and the rig got bias before its set point. The rule is the
 * MQTT ordering guarantee (one connection delivers in order: MQTT 3.1.1, "Message ordering",
 * section 4.6 — the section number from memory), not a threshold.
 */
import type { CommandAck } from '../../shared/mqtt';
import { CommandTracker } from '../../server/modules/scheduler/commands';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';

class FakeLink implements RigLink {
  seen: number | null = 100;
  readonly sent: string[] = [];
  private readonly answers = new Map<string, (ack: CommandAck) => void>();
  send(rigCode: string, _cmd: RigCommandBody, opts?: { cmdId?: string }): Promise<CommandAck> {
    const cmdId = opts!.cmdId!;
    this.sent.push(cmdId);
    return new Promise((resolve) => this.answers.set(cmdId, resolve));
  }
  ack(cmdId: string): void {
    this.answers.get(cmdId)!({ v: 1, rig: 'OV-01', cmdId, ok: true });
  }
  connected(): boolean {
    return true;
  }
  seqSeen(): number | null {
    return this.seen;
  }
}

const cool: RigCommandBody = { type: 'setpoint', setpointC: 25 };
const heat: RigCommandBody = { type: 'setpoint', setpointC: 150 };
const off: RigCommandBody = { type: 'bias', sockets: 'all', on: false };
const flush = () => new Promise((r) => setImmediate(r));

test('a set point in flight: reports of that type are not trusted; other types are', async () => {
  const link = new FakeLink();
  const t = new CommandTracker(() => link);
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', 90)).toBe(true); // nothing sent yet
  expect(t.ensure('OV-01', 'run:1:cool:rp1', cool, false)).toBe('sent');
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', 105)).toBe(false);
  expect(t.reportReflects('OV-01', 'bias', 'run:1:bias:b', 105)).toBe(true);
  expect(t.reportReflects('OV-02', 'setpoint', 'run:9:heat:b', 105)).toBe(true);
  // The command's own want is judged by its own entry (sent once, not repeated).
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:cool:rp1', 105)).toBe(true);
  expect(t.ensure('OV-01', 'run:1:cool:rp1', cool, false)).toBe('waiting');
});

test('after the ack, only reports with a higher seq than the server had then are trusted', async () => {
  const link = new FakeLink();
  const t = new CommandTracker(() => link);
  t.ensure('OV-01', 'run:1:cool:rp1', cool, false);
  link.seen = 120; // telemetry up to seq 120 had arrived when the ack came
  link.ack('run:1:cool:rp1');
  await flush();
  expect(t.acked('run:1:cool:rp1')).toBe(true);
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', 118)).toBe(false);
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', 120)).toBe(false);
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', 121)).toBe(true);
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', null)).toBe(false);
  // Forgetting the cool-down (no longer wanted) keeps what is known about the rig's set point.
  t.forgetExcept(new Set());
  expect(t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', 119)).toBe(false);
  // So a heat whose report looks satisfied is still sent when the report is older than the cool-down.
  const satisfiedByReport = true;
  expect(t.ensure('OV-01', 'run:1:heat:b', heat, satisfiedByReport && t.reportReflects('OV-01', 'setpoint', 'run:1:heat:b', 119))).toBe(
    'sent',
  );
  expect(link.sent).toEqual(['run:1:cool:rp1', 'run:1:heat:b']);
});

test('a link that cannot tell seqs: once acked, reports are trusted again', async () => {
  const link = new FakeLink();
  const t = new CommandTracker(() => link);
  t.ensure('OV-01', 'run:1:off:rp1', off, false);
  link.seen = null;
  link.ack('run:1:off:rp1');
  await flush();
  expect(t.reportReflects('OV-01', 'bias', 'run:1:bias:c', 50)).toBe(true);
});
