/**
 * MQTT topic contracts, version 1. Every Emberlot topic lives under `emberlot/v1/`; a breaking
 * payload change gets a new version segment (`emberlot/v2/…`) so old rigs and new servers can
 * run side by side during a migration.
 */

export const TOPIC_VERSION = 1 as const;
export const TOPIC_ROOT = 'emberlot/v1' as const;

/** Rig codes as printed on the oven: upper-case letters, digits, hyphens; 2–32 characters. */
export const RIG_CODE_PATTERN = /^[A-Z0-9][A-Z0-9-]{1,31}$/;

export function isRigCode(code: unknown): code is string {
  return typeof code === 'string' && RIG_CODE_PATTERN.test(code);
}

/**
 * Per-rig topic leaves. Direction: telemetry, chamber, status and command-acks go rig → server.
 * `chamber` carries a chamber's own reports (air and load temperature; shared/mqtt/chamber.ts): the
 * socket telemetry (v1 / v2) is unchanged.
 */
export const RIG_TOPIC_KINDS = ['telemetry', 'status', 'commands', 'command-acks', 'chamber'] as const;
export type RigTopicKind = (typeof RIG_TOPIC_KINDS)[number];

/** Topics a rig may publish to (its own only); it may subscribe to its own `commands` only. */
export const RIG_PUBLISH_KINDS: readonly RigTopicKind[] = ['telemetry', 'status', 'command-acks', 'chamber'];

/** Recommended QoS per topic kind. Status is also published retained (and as the last will). */
export const TOPIC_QOS: Record<RigTopicKind, 0 | 1> = {
  telemetry: 1,
  status: 1,
  commands: 1,
  'command-acks': 1,
  chamber: 1,
};

function assertRigCode(rigCode: string): void {
  if (!isRigCode(rigCode)) throw new Error(`Invalid rig code "${rigCode}"`);
}

export function rigTopic(rigCode: string, kind: RigTopicKind): string {
  assertRigCode(rigCode);
  return `${TOPIC_ROOT}/rigs/${rigCode}/${kind}`;
}

export const topics = {
  telemetry: (rigCode: string) => rigTopic(rigCode, 'telemetry'),
  status: (rigCode: string) => rigTopic(rigCode, 'status'),
  commands: (rigCode: string) => rigTopic(rigCode, 'commands'),
  commandAcks: (rigCode: string) => rigTopic(rigCode, 'command-acks'),
  chamber: (rigCode: string) => rigTopic(rigCode, 'chamber'),
  /** Server-only: ask the broker to disconnect every client of a rig at once (credentials revoked). */
  revoke: `${TOPIC_ROOT}/internal/revoke`,
  /** Wildcard subscriptions for the server. */
  all: {
    telemetry: `${TOPIC_ROOT}/rigs/+/telemetry`,
    status: `${TOPIC_ROOT}/rigs/+/status`,
    commandAcks: `${TOPIC_ROOT}/rigs/+/command-acks`,
    chamber: `${TOPIC_ROOT}/rigs/+/chamber`,
    everything: `${TOPIC_ROOT}/#`,
  },
} as const;

export const REVOKE_TOPIC = topics.revoke;

export interface ParsedRigTopic {
  rigCode: string;
  kind: RigTopicKind;
}

const isRigTopicKind = (k: string): k is RigTopicKind => (RIG_TOPIC_KINDS as readonly string[]).includes(k);

/** `emberlot/v1/rigs/OV-01/telemetry` → `{ rigCode: 'OV-01', kind: 'telemetry' }`; anything else → null. */
export function parseRigTopic(topic: string): ParsedRigTopic | null {
  const parts = topic.split('/');
  if (parts.length !== 5) return null;
  const [root, version, rigs, rigCode, kind] = parts;
  if (`${root}/${version}` !== TOPIC_ROOT || rigs !== 'rigs') return null;
  if (!isRigCode(rigCode)) return null;
  if (!isRigTopicKind(kind)) return null;
  return { rigCode, kind };
}

/** Rig code from a per-rig topic, or null. */
export function rigCodeFromTopic(topic: string): string | null {
  return parseRigTopic(topic)?.rigCode ?? null;
}

/** True when the topic (or filter) is inside this contract version's tree. */
export function isUnderRoot(topicOrFilter: string): boolean {
  return topicOrFilter === `${TOPIC_ROOT}/#` || topicOrFilter.startsWith(`${TOPIC_ROOT}/`);
}

/**
 * MQTT client id a rig must use: `rig-{rigCode}` or `rig-{rigCode}.{suffix}` (the dot cannot occur
 * in a rig code, so the prefix is unambiguous). The broker refuses other ids for rig credentials
 * and refuses `rig-…` ids for the server, so no client can take over another's session.
 */
export function rigClientId(rigCode: string, suffix?: string): string {
  assertRigCode(rigCode);
  return suffix ? `rig-${rigCode}.${suffix}` : `rig-${rigCode}`;
}

export function isRigClientIdFor(clientId: string, rigCode: string): boolean {
  return clientId === `rig-${rigCode}` || clientId.startsWith(`rig-${rigCode}.`);
}
