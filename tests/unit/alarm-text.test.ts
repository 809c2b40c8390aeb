/**
 * The critical alarms' words (issue #23 item 3): a trip the rig did not confirm gives one
 * instruction — remove bias at the rig now — in the message and in "what to do" alike, and no
 * text shows a command's internal id. A refused rig command says what the rig said and that the
 * run is in fault, with the way out. Wording rules are Emberlot's own (no external source).
 */
import type { ProtectionDevice, SocketAssessment, SocketSample } from '../../shared/safety/protection';
import { commandFailedAlarm } from '../../server/modules/alarms/run-event-alarms';
import { commandErrorWords } from '../../server/modules/alarms/command-words';
import { TRIP_ACTION, confirmedLaterMessage, tripAlarm, tripOutcome } from '../../server/modules/protection/alarm-text';
import { faultReason } from '../../server/modules/scheduler/scheduler';

const assessment: SocketAssessment = {
  tjC: 148.2,
  loopGain: 0.91,
  secondsToTjMax: 40,
  slopeCPerS: 0.05,
  thetaCaCPerW: 2,
  action: 'trip',
  reason: 'junction heading for its rating with loop gain 0.91',
};
const device: ProtectionDevice = { tjMaxC: 150, thetaJcCPerW: 10 };
const sample: SocketSample = { tS: 3600, caseC: 140, vV: 20, iA: 0.05, chamberC: 125, biasOn: true };
const CMD = 'trip:OV-02:3:0f8b3c1e-6a4e-4c55-9b1f-2f9e0b6c7d11';
const trip = tripAlarm(
  { rigId: 'r1', rigCode: 'OV-02', socket: 3 },
  { runId: 'run-1', runCode: 'HTRB-2611-A' },
  CMD,
  assessment,
  device,
  sample,
  'A0004',
);
const timeout = `Command trip (${CMD}) timed out after 5000 ms: rig OV-02 did not acknowledge.`;

describe('trip alarm text', () => {
  it('not confirmed: message and action give the same instruction, in words, without the command id', () => {
    const a = tripOutcome(trip, { ok: false, error: timeout });
    expect(a.message).toBe(
      'Emberlot sent a trip to socket 3 on OV-02 (device A0004, run HTRB-2611-A): junction heading for its rating with loop gain 0.91. ' +
        'Junction estimate 148.2 °C against a rating of 150.0 °C; loop gain 0.91; Tj max projected in 40 s at this trend. ' +
        'The rig did not confirm the trip (no answer within 5 s: rig OV-02 did not acknowledge), so the socket may still be energised.',
    );
    expect(a.action).toMatch(/^Remove bias from socket 3 at OV-02 now with the rig's own controls and keep it off;/);
    // The old texts said both "remove bias at the rig now" and "leave the socket de-energised".
    expect(a.action).not.toContain('Leave the socket de-energised');
    expect(a.message).not.toContain('removed bias');
    for (const text of [a.title, a.message, a.action]) expect(text).not.toMatch(/trip:OV-02|0f8b3c1e/);
    expect(a.details).toMatchObject({ cmdId: CMD, command: 'not confirmed', commandError: timeout });
  });

  it('confirmed: bias removed, leave it off', () => {
    const a = tripOutcome(trip, { ok: true });
    expect(a.message).toMatch(/^Emberlot removed bias from socket 3 on OV-02 .* The rig confirmed the trip\.$/);
    expect(a.action).toBe(TRIP_ACTION);
  });

  it('a later confirmation turns the unconfirmed message into a confirmed one', () => {
    const late = confirmedLaterMessage(tripOutcome(trip, { ok: false, error: 'socket relay stuck' }).message);
    expect(late).toMatch(/^Emberlot removed bias from socket 3 on OV-02 .* The rig confirmed the trip on a later attempt\.$/);
    expect(late).not.toContain('may still be energised');
  });
});

describe('command failures in words', () => {
  it.each([
    [timeout, 'no answer within 5 s: rig OV-02 did not acknowledge'],
    [
      'Command bias (run:0f8b3c1e-6a4e-4c55-9b1f-2f9e0b6c7d11:bias:lq2) timed out after 2500 ms: the MQTT broker is not reachable.',
      'no answer within 2.5 s: the MQTT broker is not reachable',
    ],
    ['no socket 4, 5, 6, 7 on this rig (sockets 0–3)', 'no socket 4, 5, 6, 7 on this rig (sockets 0–3)'],
    ['retry of run:0f8b3c1e-6a4e:bias:x failed', 'retry of the command failed'],
  ])('%s → %s', (raw, words) => {
    expect(commandErrorWords(raw)).toBe(words);
  });

  it('a refused bias-on command that faulted the run: what the rig said, that the run is in fault, and the way out', () => {
    const a = commandFailedAlarm({
      type: 'command-failed',
      runId: 'run-1',
      runCode: 'HTRB-2650-P',
      rigId: 'r9',
      rigCode: 'OV-09',
      cmdId: 'run:0f8b3c1e-6a4e-4c55-9b1f-2f9e0b6c7d11:bias:lq2',
      command: 'bias',
      biasOn: true,
      attempts: 1,
      error: 'no socket 4, 5, 6, 7 on this rig (sockets 0–3)',
      refused: true,
      faulted: true,
    });
    expect(a).toMatchObject({
      kind: 'command-failed',
      severity: 'critical',
      title: 'Run HTRB-2650-P on OV-09 in fault: bias-on command refused',
    });
    expect(a.message).toBe(
      'OV-09 refused the bias-on command for run HTRB-2650-P: "no socket 4, 5, 6, 7 on this rig (sockets 0–3)". ' +
        'The run is in fault: Emberlot asks the rig to remove bias from its sockets, and no stress hours count until someone retries after the fix or aborts the run.',
    );
    expect(a.action).toContain('Retry after fix');
    for (const text of [a.title, a.message, a.action]) expect(text).not.toContain('run:0f8b3c1e');
    expect(faultReason('OV-09', { command: 'bias', biasOn: true, attempts: 1, error: 'no socket 4 on this rig', refused: true })).toBe(
      'OV-09 refused the bias-on command: "no socket 4 on this rig".',
    );
  });
});
