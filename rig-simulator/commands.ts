/** Applying server commands to the rig state (pure). `stored` is handled by the outbox. */
import type { RigCommand } from '../shared/mqtt';
import type { RigState, SocketState } from './physics';

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
        if (cmd.iA !== undefined) return { state, ok: false, error: 'give iA (forced base current) or icA (regulated collector current), not both' };
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
