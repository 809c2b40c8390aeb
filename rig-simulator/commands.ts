/** Applying server commands to the rig state (pure). `stored` is handled by the outbox. */
import { parseCommand, type BiasCycle, type RigCommand, type StoredCommand } from '../shared/mqtt';
import type { CycleProgram, RigState, SocketState } from './physics';

export interface ApplyResult {
  state: RigState;
  ok: boolean;
  error?: string;
}

function badSockets(state: RigState, indexes: number[]): number[] {
  return indexes.filter((i) => i < 0 || i >= state.sockets.length);
}

function updateSockets(state: RigState, indexes: Set<number> | 'all', fn: (s: SocketState) => SocketState): RigState {
  return {
    ...state,
    sockets: state.sockets.map((s) => (indexes === 'all' || indexes.has(s.i) ? fn(s) : s)),
  };
}

export function applyCommand(state: RigState, cmd: Exclude<RigCommand, { type: 'stored' }>): ApplyResult {
  switch (cmd.type) {
    case 'setpoint': {
      if (cmd.profile) return { state, ok: false, error: 'this rig is a burn-in oven: it runs no temperature-cycling programme' };
      if (cmd.setpointC > state.maxTempC) {
        return { state, ok: false, error: `setpoint ${cmd.setpointC} °C is above this rig's maximum of ${state.maxTempC} °C` };
      }
      let humiditySetpointPct = state.humiditySetpointPct;
      if (cmd.humidityPct !== undefined) {
        if (cmd.humidityPct !== null && !state.humidityCapable) {
          return { state, ok: false, error: 'this rig has no humidity control' };
        }
        humiditySetpointPct = cmd.humidityPct;
      }
      return { state: { ...state, setpointC: cmd.setpointC, humiditySetpointPct }, ok: true };
    }
    case 'bias': {
      if (cmd.sockets !== 'all') {
        const bad = badSockets(state, cmd.sockets);
        if (bad.length) {
          return { state, ok: false, error: `no socket ${bad.join(', ')} on this rig (sockets 0–${state.sockets.length - 1})` };
        }
      }
      const set = cmd.sockets === 'all' ? 'all' : new Set(cmd.sockets);
      if (cmd.icA !== undefined) {
        if (cmd.iA !== undefined)
          return { state, ok: false, error: 'give iA (forced base current) or icA (regulated collector current), not both' };
        const reverse = state.sockets.filter((s) => (set === 'all' || set.has(s.i)) && s.mode !== 'powered').map((s) => s.i);
        if (reverse.length) return { state, ok: false, error: `icA needs powered bias; socket ${reverse.join(', ')} is reverse-biased` };
      }
      const next = updateSockets(state, set, (s) => ({
        ...s,
        biasOn: cmd.on,
        vV: cmd.vV ?? s.vV,
        // A forced IB replaces regulation; a regulated IC replaces the forced IB.
        ...(cmd.iA !== undefined ? (s.mode === 'powered' ? { ibA: cmd.iA, icSetA: null } : { complianceA: cmd.iA }) : {}),
        ...(cmd.icA !== undefined ? { icSetA: cmd.icA } : {}),
        // A cycling program belongs to one bias-on: without `cycle` the power is continuous.
        cycle: cmd.on && cmd.cycle ? cycleProgram(cmd.cycle, s.cycle) : null,
      }));
      return { state: next, ok: true };
    }
    case 'trip': {
      if (badSockets(state, [cmd.socket]).length) return { state, ok: false, error: `no socket ${cmd.socket} on this rig` };
      return {
        state: updateSockets(state, new Set([cmd.socket]), (s) => ({ ...s, tripped: true, tripReason: cmd.reason })),
        ok: true,
      };
    }
    case 'reset-trip': {
      if (badSockets(state, [cmd.socket]).length) return { state, ok: false, error: `no socket ${cmd.socket} on this rig` };
      // Clearing the latch never re-applies bias by itself: the server must turn it on again.
      return {
        state: updateSockets(state, new Set([cmd.socket]), (s) => ({ ...s, tripped: false, tripReason: null, biasOn: false })),
        ok: true,
      };
    }
  }
}

/** A socket's cycling program from a bias command; a repeated program keeps its phase and drive. */
function cycleProgram(c: BiasCycle, was: CycleProgram | null | undefined): CycleProgram {
  if (was && was.onS === c.onS && was.offS === c.offS && was.deltaTjC === c.deltaTjC) return was;
  return { onS: c.onS, offS: c.offS, deltaTjC: c.deltaTjC, phaseS: 0, hotTjC: null, driveScale: was?.driveScale ?? 1 };
}

/** What the rig does with one message on its command topic. */
export type CommandOutcome =
  /** Not a valid command: answered with a refusal when it carried a usable cmdId. */
  | { kind: 'invalid'; reason: string; cmdId: string | null }
  /** `stored`: the outbox drops these seqs. */
  | { kind: 'stored'; ranges: StoredCommand['ranges'] }
  /** Any other command: applied (or refused) once per cmdId, then acknowledged. */
  | { kind: 'answered'; cmdId: string; ok: boolean; error?: string; state: RigState; repeat: boolean };

const CMD_ID = /^[A-Za-z0-9._:-]{1,64}$/;

/**
 * Commands by cmdId: each applied at most once; a repeat gets the same answer without being
 * applied again (the last 1,000 remembered). Pure apart from that memory.
 */
export class CommandDesk {
  private readonly recent = new Map<string, { ok: boolean; error?: string }>();

  handle(payload: Buffer, state: RigState): CommandOutcome {
    const parsed = parseCommand(payload);
    if (!parsed.ok) return { kind: 'invalid', reason: parsed.reason, cmdId: cmdIdOf(payload) };
    const cmd = parsed.data;
    if (cmd.type === 'stored') return { kind: 'stored', ranges: cmd.ranges };
    const seen = this.recent.get(cmd.cmdId);
    if (seen) return { kind: 'answered', cmdId: cmd.cmdId, ...seen, state, repeat: true };
    const result = applyCommand(state, cmd);
    const outcome = result.ok ? { ok: true } : { ok: false, error: result.error };
    this.recent.set(cmd.cmdId, outcome);
    if (this.recent.size > 1000) this.recent.delete(this.recent.keys().next().value as string);
    return { kind: 'answered', cmdId: cmd.cmdId, ...outcome, state: result.ok ? result.state : state, repeat: false };
  }
}

/** The cmdId of an invalid command, when it has a usable one (then the refusal can be acknowledged). */
function cmdIdOf(payload: Buffer): string | null {
  let cmdId: unknown;
  try {
    cmdId = (JSON.parse(payload.toString('utf8')) as { cmdId?: unknown })?.cmdId;
  } catch {
    return null; // not JSON: nothing to answer
  }
  return typeof cmdId === 'string' && CMD_ID.test(cmdId) ? cmdId : null;
}
