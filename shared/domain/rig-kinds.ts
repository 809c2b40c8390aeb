/**
 * What a rig is — declared once. A 'board' rig is an oven with a burn-in board: each device in a
 * socket with its own bias. A 'chamber' is a temperature-cycling chamber, storage oven or autoclave
 * for the unbiased kinds (shared/domain/stress.ts): devices are loaded by count or serial list and
 * its socketCount is its capacity in devices (load positions), not biased sockets.
 *
 * Why a rig kind rather than a capacity on the side: a chamber is booked, permitted, maintained,
 * calibrated and drawn on the floor exactly like an oven, and every device still needs its own
 * record of hours, cycles and failures (run_sockets keeps one row per device, its socket index the
 * load position), so one table with a kind keeps every existing check and report in one place.
 */
export const RIG_KINDS = ['board', 'chamber'] as const;
export type RigKind = (typeof RIG_KINDS)[number];
export const RIG_KIND_LABEL: Record<RigKind, string> = { board: 'Burn-in oven', chamber: 'Chamber' };
/** What a rig holds, in words: "32 sockets" / "200 devices". */
export const capacityWords = (kind: RigKind, n: number): string => `${n} ${kind === 'chamber' ? 'devices' : 'sockets'}`;
