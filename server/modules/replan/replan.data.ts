/** The re-planner's reads and writes (server/modules/replan). Each takes the EntityManager to use. */
import { In, type EntityManager } from 'typeorm';
import { ON_RIG_STATES, sqlStateList } from '../../../shared/domain/run-states';
import type { ReplanState } from '../../../shared/schemas/replan';
import { ReplanProposalEntity, RigEntity, RunEntity, UserEntity } from '../../db/entities';

/** One re-plan at a time, across processes (the scheduler's overrun re-plan takes the same lock). */
export { findPlan, lockReplanning } from '../scheduler/scheduler.data';

export function findRig(m: EntityManager, rigId: string): Promise<RigEntity | null> {
  return m.findOneBy(RigEntity, { id: rigId });
}

export function bookedRunsOnRig(m: EntityManager, rigId: string): Promise<RunEntity[]> {
  return m.find(RunEntity, { where: { rigId, state: 'booked' }, order: { scheduledStart: 'ASC', code: 'ASC' } });
}

export function lockRun(m: EntityManager, runId: string): Promise<RunEntity | null> {
  return m.findOne(RunEntity, { where: { id: runId }, lock: { mode: 'pessimistic_write' } });
}

export function lockProposal(m: EntityManager, id: string): Promise<ReplanProposalEntity | null> {
  return m.findOne(ReplanProposalEntity, { where: { id }, lock: { mode: 'pessimistic_write' } });
}

/** Runs with an open proposal whose booking is still on this rig. */
export async function runsWithOpenProposals(m: EntityManager, rigId: string): Promise<string[]> {
  const rows: Array<{ run_id: string }> = await m.query(
    `SELECT DISTINCT p.run_id FROM replan_proposals p JOIN runs r ON r.id = p.run_id
     WHERE p.state = 'open' AND r.rig_id = $1 AND r.state = 'booked'`,
    [rigId],
  );
  return rows.map((r) => r.run_id);
}

/** Every open proposal of a run becomes `superseded` (a newer set or an accepted one replaces it). */
export async function supersedeOpen(m: EntityManager, runId: string, except?: string): Promise<void> {
  await m.query(
    `UPDATE replan_proposals SET state = 'superseded' WHERE run_id = $1 AND state = 'open' AND ($2::uuid IS NULL OR id <> $2)`,
    [runId, except ?? null],
  );
}

export async function insertProposals(m: EntityManager, rows: Array<Partial<ReplanProposalEntity>>): Promise<void> {
  if (rows.length) await m.insert(ReplanProposalEntity, rows);
}

export async function markAccepted(m: EntityManager, id: string, userId: string, at: Date): Promise<void> {
  await m.update(ReplanProposalEntity, { id }, { state: 'accepted', decidedById: userId, decidedAt: at });
}

export async function moveBooking(m: EntityManager, runId: string, rigId: string, start: Date, end: Date): Promise<void> {
  await m.update(RunEntity, { id: runId }, { rigId, scheduledStart: start, scheduledEnd: end });
}

export interface ProposalRow extends ReplanProposalEntity {
  runCode: string;
  fromRigCode: string;
  toRigCode: string;
  decidedByName: string | null;
}

/** Proposals with their run and rig codes, newest first (open ones first). */
export async function listProposals(m: EntityManager, state?: ReplanState, ids?: string[]): Promise<ProposalRow[]> {
  const rows = await m.find(ReplanProposalEntity, {
    where: { ...(state ? { state } : {}), ...(ids ? { id: In(ids) } : {}) },
    order: { createdAt: 'DESC', delayH: 'ASC' },
    take: 200,
  });
  if (!rows.length) return [];
  const runs = new Map((await m.find(RunEntity, { where: { id: In([...new Set(rows.map((r) => r.runId))]) } })).map((r) => [r.id, r.code]));
  const rigIds = [...new Set(rows.flatMap((r) => [r.fromRigId, r.toRigId]))];
  const rigs = new Map((await m.find(RigEntity, { where: { id: In(rigIds) } })).map((r) => [r.id, r.code]));
  const userIds = [...new Set(rows.map((r) => r.decidedById).filter((x): x is string => !!x))];
  const users = new Map((userIds.length ? await m.find(UserEntity, { where: { id: In(userIds) } }) : []).map((u) => [u.id, u.name]));
  return rows.map((r) => ({
    ...r,
    runCode: runs.get(r.runId) ?? '?',
    fromRigCode: rigs.get(r.fromRigId) ?? '?',
    toRigCode: rigs.get(r.toRigId) ?? '?',
    decidedByName: r.decidedById ? (users.get(r.decidedById) ?? null) : null,
  }));
}

export interface HeldRunRow {
  id: string;
  code: string;
  state: string;
  stress_hours: number;
  rig_code: string;
  online: boolean;
  in_maintenance: boolean;
}

/** Runs on a rig that is offline or in maintenance now. */
export function heldRuns(m: EntityManager, now: Date): Promise<HeldRunRow[]> {
  return m.query(
    `SELECT r.id, r.code, r.state, r.stress_hours, g.code AS rig_code, g.online,
            EXISTS (SELECT 1 FROM rig_maintenance w WHERE w.rig_id = g.id AND w.starts_at <= $1 AND w.ends_at > $1) AS in_maintenance
     FROM runs r JOIN rigs g ON g.id = r.rig_id
     WHERE r.state IN ${sqlStateList(ON_RIG_STATES)}
       AND (NOT g.online OR EXISTS (SELECT 1 FROM rig_maintenance w WHERE w.rig_id = g.id AND w.starts_at <= $1 AND w.ends_at > $1))
     ORDER BY g.code, r.code`,
    [now],
  );
}
