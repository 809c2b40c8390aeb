import type { FloorTile } from '@/shared/schemas/floor';
import type { Tone } from '@/components/theme/tokens';

// The rig's words for the floor tile and the rig page. Own module: the rig page imports them without
// pulling the tile (and with it the floor) into the shared chunk.

const RUN_STATE_LABEL: Record<string, string> = {
  loading: 'Loading',
  heating: 'Heating',
  stressing: 'Stressing',
  paused: 'Paused',
  'read-hold': 'Read-point hold',
  cooling: 'Cooling',
  fault: 'Rig fault',
};

/** The pill: connection first (offline outranks everything), then what the run is doing. */
export function rigState(t: FloorTile): { tone: Tone; label: string } {
  if (!t.active) return { tone: 'idle', label: 'Decommissioned' };
  if (!t.online) return { tone: 'danger', label: 'Offline' };
  if (t.tripped > 0)
    return { tone: 'attention', label: t.run ? `${RUN_STATE_LABEL[t.run.state] ?? t.run.state} · trips` : 'Online · trips' };
  if (t.run?.state === 'fault') return { tone: 'danger', label: 'Rig fault' };
  // Under stress with no socket powered is not stress: say so rather than a green "Stressing".
  // (A chamber biases nothing: its devices are unbiased by design.)
  if (t.run?.state === 'stressing' && t.powered === 0 && !t.chamber) return { tone: 'attention', label: 'Stressing · 0 powered' };
  if (t.run) return { tone: t.run.state === 'paused' ? 'attention' : 'ok', label: RUN_STATE_LABEL[t.run.state] ?? t.run.state };
  return { tone: 'idle', label: 'Online · idle' };
}

/** "18 h" of stress, or "2 d 4 h". */
export function fmtHours(h: number): string {
  if (h < 1) return `${Math.max(0, Math.round(h * 60))} min`;
  if (h < 48) return `${h < 10 ? h.toFixed(1) : Math.round(h)} h`;
  const whole = Math.round(h); // round first, so 95.6 h reads "4 d 0 h", not "3 d 24 h"
  return `${Math.floor(whole / 24)} d ${whole % 24} h`;
}
