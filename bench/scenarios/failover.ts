/**
 * failover (issue #24 item 6): the one result the issue asks of `npm run bench` — a broker node
 * killed mid-ingest and the leader killed mid-ingest — made of the two scenario runners' results
 * (failover-broker.ts, failover-leader.ts), each run once: with `failoverBroker` / `failoverLeader`
 * in the same run their results are reused, otherwise `failover` runs them (run-bench.ts).
 *
 *   published / stored / lost / duplicateRows / duplicateCommands   sums over both parts
 *   recoverySeconds   the slower part's (kill → samples taken after the kill stored)
 *   targetsMet        lost 0, duplicate commands 0, each part recovered within 10 s
 *   brokerKilled / leaderKilled   each part's own result (or its `{ error }`)
 */
import type { FailoverBrokerResult } from './failover-broker';
import type { FailoverLeaderResult } from './failover-leader';

/** Seconds within which service must be back after either kill (issue #24: "within seconds"). */
export const FAILOVER_RECOVERY_TARGET_S = 10;

export type Part<T> = T | { error: string };

export interface FailoverResult {
  published: number | null;
  stored: number | null;
  lost: number | null;
  duplicateRows: number | null;
  duplicateCommands: number | null;
  recoverySeconds: number | null;
  targetsMet: boolean;
  brokerKilled: Part<FailoverBrokerResult>;
  leaderKilled: Part<FailoverLeaderResult>;
}

const ok = <T extends object>(p: Part<T>): p is T => !('error' in p);

export function failoverSummary(broker: Part<FailoverBrokerResult>, leader: Part<FailoverLeaderResult>): FailoverResult {
  if (!ok(broker) || !ok(leader)) {
    // A part that failed gives no figures: the sums would undercount, so none are given.
    return {
      published: null,
      stored: null,
      lost: null,
      duplicateRows: null,
      duplicateCommands: null,
      recoverySeconds: null,
      targetsMet: false,
      brokerKilled: broker,
      leaderKilled: leader,
    };
  }
  const recoveries = [broker.recoverySeconds, leader.recoverySeconds];
  const recovered = recoveries.every((s) => s !== null && Number.isFinite(s));
  const recoverySeconds = recovered ? Math.max(...recoveries.map(Number)) : null;
  const lost = broker.lost + leader.lost;
  const duplicateCommands = broker.duplicateCommands + leader.duplicateCommands;
  return {
    published: broker.published + leader.published,
    stored: broker.stored + leader.stored,
    lost,
    duplicateRows: broker.duplicateRows + leader.duplicateRows,
    duplicateCommands,
    recoverySeconds,
    targetsMet: lost === 0 && duplicateCommands === 0 && recoverySeconds !== null && recoverySeconds < FAILOVER_RECOVERY_TARGET_S,
    brokerKilled: broker,
    leaderKilled: leader,
  };
}
