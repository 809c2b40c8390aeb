/**
 * Qualifications: a template's stress groups × the chosen lots. A cell's runs are the runs of its
 * plan kind on its lot (found at read time, so a run booked anywhere in the app fills its cell);
 * its verdict is the lot verdict's judgement of that kind (AnalyticsService → shared/verdict), never
 * a rule of its own; its projected finish comes from the scheduler's windows and proposals (read only).
 */
import { In, type DataSource, type EntityManager } from 'typeorm';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { LotDetail, LotPlanView } from '../../../shared/schemas/analytics';
import type {
  CreateQualificationInput,
  ExternalResultInput,
  QualCellDrift,
  QualCellRun,
  QualCellView,
  QualificationDetail,
  QualificationSummary,
  QualTemplateView,
  UpdateCellInput,
  WaiveCellInput,
  WithdrawCellInput,
} from '../../../shared/schemas/qualifications';
import {
  CELL_DONE_STATES,
  CELL_STATE_LABEL,
  QUAL_TEMPLATES,
  QUAL_TEMPLATE_KEYS,
  cellShortfall,
  cellState,
  type CellFacts,
  planMatrix,
  qualificationStatus,
  type QualGroup,
} from '../../../shared/qualification/templates';
import { VERDICT_RANK } from '../../../shared/verdict/rules';
import type { LotVerdict } from '../../../shared/domain/verdicts';
import type { AppContext } from '../../context';
import {
  DeviceTypeEntity,
  LotEntity,
  QualificationCellEntity,
  QualificationCellWithdrawalEntity,
  QualificationEntity,
  StressPlanEntity,
  UserEntity,
  type WithdrawnRecord,
} from '../../db/entities';
import { formatUtc } from '../../../shared/domain/format';
import { conflict, notFound, unprocessable } from '../../http/errors';
import { loadSchedulingInputs } from '../runs/scheduling-data';
import { lotCore, stressTemperature } from '../analytics/lot-analysis';
import type { DriftChart } from '../reports/drift-chart';
import { driftCharts } from '../reports/reports.service';
import type { RunDriftResult } from '../../../shared/schemas/measurements';
import { lastCodeNumber, runsOnLots, type QualRunRow } from './qualifications.data';

const CODE_PREFIX = 'QUAL';

/** One cell's lot-verdict material: the lot's plan judgements of the cell's kind. */
type LotPlans = Map<string, LotPlanView[]>;

export interface QualificationReportData {
  detail: QualificationDetail;
  /** The lot views behind the cells (the same objects GET /api/analytics/lots/:id returns). */
  lots: Map<string, LotDetail>;
  runs: QualRunRow[];
  /** Per cell with a verdict: the runs of the sample that verdict judged (the cell's drift charts). */
  judgedRuns: Array<{ cellId: string; lotId: string; groupName: string; runIds: string[] }>;
}

export class QualificationsService {
  constructor(private readonly ctx: AppContext) {}

  private get ds(): DataSource {
    return this.ctx.ds;
  }

  templates(): QualTemplateView[] {
    return QUAL_TEMPLATE_KEYS.map((k) => QUAL_TEMPLATES[k]);
  }

  async create(actor: SessionUser, input: CreateQualificationInput): Promise<QualificationDetail> {
    const template = QUAL_TEMPLATES[input.templateKey];
    const id = await this.ds.transaction(async (m) => {
      const types = await m.find(DeviceTypeEntity, { where: { id: In(input.deviceTypeIds) } });
      if (types.length !== input.deviceTypeIds.length) throw unprocessable('A chosen device type was not found.');
      const lots = await m.find(LotEntity, { where: { id: In(input.lotIds) } });
      if (lots.length !== input.lotIds.length) throw unprocessable('A chosen lot was not found.');
      const foreign = lots.filter((l) => !input.deviceTypeIds.includes(l.deviceTypeId));
      if (foreign.length)
        throw unprocessable(
          `Lot ${foreign.map((l) => l.code).join(', ')} is of a device type outside this qualification; choose its device type too or another lot.`,
        );
      const n = (await lastCodeNumber(m, CODE_PREFIX)) + 1;
      const q = await m.save(
        m.create(QualificationEntity, {
          code: `${CODE_PREFIX}-${String(n).padStart(3, '0')}`,
          name: input.name,
          templateKey: template.key,
          groups: template.groups.map((g) => ({ ...g })),
          deviceTypeIds: input.deviceTypeIds,
          lotIds: input.lotIds,
          familyRule: input.familyRule,
          createdById: actor.id,
        }),
      );
      const { cells } = planMatrix(template, input.lotIds);
      await m.insert(
        QualificationCellEntity,
        cells.map((c) => ({ ...c, qualificationId: q.id })),
      );
      await this.ctx.audit.record(
        {
          actor,
          action: 'qualification.create',
          entity: 'qualification',
          entityId: q.id,
          details: {
            code: q.code,
            template: template.key,
            deviceTypeIds: input.deviceTypeIds,
            lotIds: input.lotIds,
            familyRule: input.familyRule,
          },
        },
        m,
      );
      return q.id;
    });
    return this.detail(id);
  }

  async list(): Promise<QualificationSummary[]> {
    const quals = await this.ds.getRepository(QualificationEntity).find({ order: { createdAt: 'DESC' } });
    const out: QualificationSummary[] = [];
    for (const q of quals) out.push(summaryOf(await this.detail(q.id)));
    return out;
  }

  private async load(m: EntityManager, id: string) {
    const q = await m.findOne(QualificationEntity, { where: { id } });
    if (!q) throw notFound('The qualification');
    return q;
  }

  private async cellOf(m: EntityManager, qualificationId: string, cellId: string): Promise<QualificationCellEntity> {
    await this.load(m, qualificationId);
    const cell = await m.findOne(QualificationCellEntity, { where: { id: cellId, qualificationId } });
    if (!cell) throw notFound('The cell');
    return cell;
  }

  async updateCell(actor: SessionUser, id: string, cellId: string, input: UpdateCellInput): Promise<QualificationDetail> {
    await this.ds.transaction(async (m) => {
      const cell = await this.cellOf(m, id, cellId);
      const patch = { plannedSample: input.plannedSample ?? cell.plannedSample, acceptNumber: input.acceptNumber ?? cell.acceptNumber };
      if (patch.acceptNumber >= patch.plannedSample) throw unprocessable('The accept number must be below the planned sample.');
      await m.update(QualificationCellEntity, { id: cell.id }, patch);
      await this.ctx.audit.record(
        {
          actor,
          action: 'qualification.cell-update',
          entity: 'qualification',
          entityId: id,
          details: {
            cellId,
            groupKey: cell.groupKey,
            lotId: cell.lotId,
            before: { plannedSample: cell.plannedSample, acceptNumber: cell.acceptNumber },
            after: patch,
          },
        },
        m,
      );
    });
    return this.detail(id);
  }

  async waive(actor: SessionUser, id: string, cellId: string, input: WaiveCellInput): Promise<QualificationDetail> {
    await this.ds.transaction(async (m) => {
      const cell = await this.cellOf(m, id, cellId);
      if (cell.waiverReason) throw conflict('The cell is already waived.');
      await m.update(
        QualificationCellEntity,
        { id: cell.id },
        { waiverReason: input.reason, waivedById: actor.id, waivedAt: this.ctx.now() },
      );
      await this.ctx.audit.record(
        {
          actor,
          action: 'qualification.cell-waive',
          entity: 'qualification',
          entityId: id,
          reason: input.reason,
          details: { cellId, groupKey: cell.groupKey, lotId: cell.lotId },
        },
        m,
      );
    });
    return this.detail(id);
  }

  async recordExternal(actor: SessionUser, id: string, cellId: string, input: ExternalResultInput): Promise<QualificationDetail> {
    await this.ds.transaction(async (m) => {
      const cell = await this.cellOf(m, id, cellId);
      if (cell.planKind !== null) {
        const q = await this.load(m, id);
        const runs = (await runsOnLots(m, [cell.lotId])).filter((r) => r.kind === cell.planKind && r.state !== 'aborted');
        if (runs.length)
          throw unprocessable(
            `This cell is judged from its runs (${runs.map((r) => r.code).join(', ')}); an outside result is only for a group with no run here (ESD, DPA, or a stress done by an outside lab).`,
            { qualification: q.code },
          );
      }
      if (cell.externalResult) throw conflict('A result is already recorded for this cell.');
      const at = new Date(input.at);
      if (at.getTime() > this.ctx.now().getTime() + 60_000) throw unprocessable('The test date is in the future.');
      await m.update(
        QualificationCellEntity,
        { id: cell.id },
        {
          externalResult: input.result,
          externalBy: input.by,
          externalAt: at,
          externalDocument: input.document,
          externalRecordedById: actor.id,
        },
      );
      await this.ctx.audit.record(
        {
          actor,
          action: 'qualification.cell-external',
          entity: 'qualification',
          entityId: id,
          details: {
            cellId,
            groupKey: cell.groupKey,
            lotId: cell.lotId,
            result: input.result,
            by: input.by,
            at: at.toISOString(),
            document: input.document,
          },
        },
        m,
      );
    });
    return this.detail(id);
  }

  /**
   * Withdraw a cell's waiver or outside result: what it said is kept (qualification_cell_withdrawals
   * and the audit log) and the cell's record is cleared, so the cell stands again on its runs.
   * The row is locked, so of two withdrawals at once the second finds nothing left (409).
   */
  async withdraw(actor: SessionUser, id: string, cellId: string, input: WithdrawCellInput): Promise<QualificationDetail> {
    await this.ds.transaction(async (m) => {
      await this.load(m, id);
      const cell = await m.findOne(QualificationCellEntity, {
        where: { id: cellId, qualificationId: id },
        lock: { mode: 'pessimistic_write' },
      });
      if (!cell) throw notFound('The cell');
      const nameOf = async (userId: string | null) =>
        (userId ? (await m.findOne(UserEntity, { where: { id: userId } }))?.name : undefined) ?? 'unknown';
      let withdrawn: WithdrawnRecord;
      let clear: Partial<Omit<QualificationCellEntity, 'qualification' | 'lot'>>;
      if (input.record === 'waiver') {
        if (!cell.waiverReason || !cell.waivedAt)
          throw conflict('This cell has no waiver to withdraw; it may have been withdrawn already.');
        withdrawn = { text: cell.waiverReason, by: await nameOf(cell.waivedById), at: cell.waivedAt.toISOString() };
        clear = { waiverReason: null, waivedById: null, waivedAt: null };
      } else {
        if (!cell.externalResult || !cell.externalAt)
          throw conflict('This cell has no outside result to withdraw; it may have been withdrawn already.');
        withdrawn = {
          text: `${cell.externalResult} - ${cell.externalBy ?? ''}, tested ${formatUtc(cell.externalAt)}, document ${cell.externalDocument ?? ''}`,
          by: await nameOf(cell.externalRecordedById),
          at: cell.externalAt.toISOString(),
        };
        clear = { externalResult: null, externalBy: null, externalAt: null, externalDocument: null, externalRecordedById: null };
      }
      const at = this.ctx.now();
      await m.insert(QualificationCellWithdrawalEntity, {
        qualificationId: id,
        cellId: cell.id,
        record: input.record,
        withdrawn,
        reason: input.reason,
        withdrawnById: actor.id,
        withdrawnAt: at,
      });
      await m.update(QualificationCellEntity, { id: cell.id }, clear);
      await this.ctx.audit.record(
        {
          actor,
          action: 'qualification.cell-withdraw',
          entity: 'qualification',
          entityId: id,
          reason: input.reason,
          details: { cellId, groupKey: cell.groupKey, lotId: cell.lotId, record: input.record, withdrawn },
        },
        m,
      );
    });
    return this.detail(id);
  }

  /**
   * A cell's drift for the qualification screen's chart: the lot's devices on the runs of the
   * sample its verdict judged (cellJudgement: the worst of the lot's plans of the cell's kind),
   * read by the run drift (MeasurementsService.drift) and summarised by the lot screen's own
   * lotCore — the same read-point distributions and fitted path, for this cell's runs only.
   */
  async cellDrift(id: string, cellId: string): Promise<QualCellDrift> {
    const m = this.ds.manager;
    const cell = await this.cellOf(m, id, cellId);
    const lot = await m.findOneByOrFail(LotEntity, { id: cell.lotId });
    const empty = (note: string): QualCellDrift => ({
      cellId,
      groupKey: cell.groupKey,
      lotCode: lot.code,
      planName: null,
      runCodes: [],
      plan: null,
      criteria: null,
      readPointsH: [],
      readPoints: [],
      trends: [],
      note,
    });
    if (cell.planKind === null) return empty('This group takes a result recorded from outside: there is no drift to chart.');
    const runs = await runsOnLots(m, [cell.lotId]);
    if (!runs.some((r) => r.kind === cell.planKind)) return empty('No run of this kind on this lot yet.');
    const judged = cellJudgement((await this.ctx.services.analytics.lot(cell.lotId)).plans, cell.planKind);
    if (!judged) return empty('No run of this kind on this lot has readings yet.');
    const plan = await m.findOneByOrFail(StressPlanEntity, { id: judged.planId });
    const devices = [];
    for (const r of judged.runs)
      devices.push(...(await this.ctx.services.measurements.drift(r.runId)).devices.filter((d) => d.lotId === lot.id));
    const type = await m.findOneByOrFail(DeviceTypeEntity, { id: lot.deviceTypeId });
    const readPointsH = [...plan.readPointsH].sort((a, b) => a - b);
    const core = lotCore({
      lot: { id: lot.id, code: lot.code, deviceTypeId: lot.deviceTypeId, partNumber: type.partNumber, dateCode: lot.dateCode ?? '' },
      run: null,
      plan: {
        id: plan.id,
        name: plan.name,
        kind: plan.kind,
        durationH: plan.durationH,
        acceptNumber: plan.acceptNumber,
        sampleSize: plan.sampleSize,
        chamberC: plan.chamberC,
        eaEv: plan.eaEv,
        useC: plan.useC,
        ...stressTemperature(plan),
        readPointsH,
        criteria: plan.criteria,
      },
      devices,
    });
    return {
      cellId,
      groupKey: cell.groupKey,
      lotCode: lot.code,
      planName: plan.name,
      runCodes: judged.runs.map((r) => r.runCode),
      plan: { durationH: plan.durationH },
      criteria: plan.criteria,
      readPointsH,
      readPoints: core.readPoints,
      trends: core.trends,
      note: core.readPoints.some((r) => r.hours > 0) ? null : 'No readings after time zero yet.',
    };
  }

  /**
   * The report's drift charts of one lot, cell by cell: each cell's judged runs taken together
   * (a sample split over rigs is one sample), this lot's devices, drawn as the lot report draws a run.
   */
  async cellCharts(data: QualificationReportData, lotId: string): Promise<DriftChart[]> {
    const out: DriftChart[] = [];
    for (const cell of data.judgedRuns.filter((x) => x.lotId === lotId)) {
      const drifts: RunDriftResult[] = [];
      for (const runId of cell.runIds) drifts.push(await this.ctx.services.measurements.drift(runId));
      if (!drifts.length) continue;
      const merged: RunDriftResult = {
        ...drifts[0],
        runCode: drifts.map((d) => d.runCode).join(' + '),
        devices: drifts.flatMap((d) => d.devices),
      };
      if (!merged.devices.some((d) => d.lotId === lotId && d.readPoints.some((r) => r.readPointH > 0))) continue;
      out.push(...driftCharts(merged, lotId).map((chart) => ({ ...chart, title: `${cell.groupName}: ${chart.title}` })));
    }
    return out;
  }

  async detail(id: string): Promise<QualificationDetail> {
    return (await this.reportData(id)).detail;
  }

  /** Everything the matrix and the report show, read once. */
  async reportData(id: string): Promise<QualificationReportData> {
    const m = this.ds.manager;
    const q = await this.load(m, id);
    const cells = await m.find(QualificationCellEntity, { where: { qualificationId: id }, order: { position: 'ASC' } });
    const lots = await m.find(LotEntity, { where: { id: In(q.lotIds) } });
    const lotById = new Map(lots.map((l) => [l.id, l]));
    const types = await m.find(DeviceTypeEntity, { where: { id: In(q.deviceTypeIds) } });
    const runs = await runsOnLots(m, q.lotIds);
    const { withdrawals, users } = await cellRecords(m, id, cells);

    // The lot views (the same the lot screens show) for lots with runs of a cell's kind.
    const lotDetails = new Map<string, LotDetail>();
    const lotPlans: LotPlans = new Map();
    for (const lotId of new Set(runs.map((r) => r.lot_id))) {
      const d = await this.ctx.services.analytics.lot(lotId);
      lotDetails.set(lotId, d);
      lotPlans.set(lotId, d.plans);
    }

    const nowMs = this.ctx.now().getTime();
    const sched = await loadSchedulingInputs(m, nowMs, this.ctx.services.runs.timing);
    const windowEnd = new Map(sched.commitments.map((c) => [c.runId, c.endMs]));

    const views: QualCellView[] = [];
    const judgedRuns: QualificationReportData['judgedRuns'] = [];
    for (const c of cells) {
      const lot = lotById.get(c.lotId)!;
      const cellRuns = c.planKind ? runs.filter((r) => r.lot_id === c.lotId && r.kind === c.planKind) : [];
      const worst = cellJudgement(lotPlans.get(c.lotId), c.planKind);
      const verdict: LotVerdict | null = worst?.verdict ?? null;
      if (worst?.runs.length)
        judgedRuns.push({
          cellId: c.id,
          lotId: c.lotId,
          groupName: q.groups.find((g) => g.key === c.groupKey)?.name ?? c.groupKey,
          runIds: worst.runs.map((r) => r.runId),
        });
      const facts: CellFacts = {
        waived: !!c.waiverReason,
        planKind: c.planKind,
        external: c.externalResult ? { result: c.externalResult } : null,
        runStates: cellRuns.map((r) => r.state),
        verdict,
        judged: worst?.sample.judged ?? null,
        failures: worst?.sample.failures ?? null,
        plannedSample: c.plannedSample,
        acceptNumber: c.acceptNumber,
      };
      const state = cellState(facts);
      const shortfall = worst ? cellShortfall(facts) : null;
      const runViews: QualCellRun[] = cellRuns.map((r) => ({
        id: r.id,
        code: r.code,
        state: r.state,
        rigCode: r.rig_code,
        planName: r.plan_name,
        stressHours: Number(r.stress_hours),
        projectedEnd: windowEnd.has(r.id) ? new Date(windowEnd.get(r.id)!).toISOString() : null,
      }));
      const projection = await this.projectCell(c, state, runViews, lot.deviceTypeId, nowMs);
      views.push({
        id: c.id,
        groupKey: c.groupKey,
        lotId: c.lotId,
        lotCode: lot.code,
        planKind: c.planKind,
        plannedSample: c.plannedSample,
        acceptNumber: c.acceptNumber,
        state,
        verdict,
        verdictReasons: [...(shortfall ? [shortfall] : []), ...(worst?.reasons ?? [])],
        sample: worst ? { booked: worst.sample.booked, judged: worst.sample.judged, failures: worst.sample.failures } : null,
        fit: worst?.fit
          ? { fit60: worst.fit.fit60, fit90: worst.fit.fit90, mechanismLabel: worst.fit.mechanismLabel, method: worst.fit.method }
          : null,
        runs: runViews,
        ...recordViews(c, users, withdrawals),
        projectedFinish: projection.at,
        projectionNote: projection.note,
      });
    }

    const groups: QualGroup[] = q.groups;
    const { shortLots } = planMatrix({ ...QUAL_TEMPLATES[q.templateKey], groups }, q.lotIds);
    const { left, finish, projectionNote } = whatIsLeft(groups, shortLots, views);

    const status = qualificationStatus(
      views.map((v) => v.state),
      shortLots.length,
    );
    const template = QUAL_TEMPLATES[q.templateKey];
    const detail: QualificationDetail = {
      id: q.id,
      code: q.code,
      name: q.name,
      templateKey: q.templateKey,
      templateName: template.name,
      standard: template.standard,
      sequence: template.sequence,
      sequenceBasis: template.sequenceBasis,
      deviceTypes: q.deviceTypeIds.map((tid) => ({ id: tid, partNumber: types.find((t) => t.id === tid)?.partNumber ?? '?' })),
      lots: q.lotIds.map((lid) => ({ id: lid, code: lotById.get(lid)?.code ?? '?', deviceTypeId: lotById.get(lid)?.deviceTypeId ?? '' })),
      status,
      cellsDone: views.filter((v) => CELL_DONE_STATES.includes(v.state)).length,
      cellsTotal: views.length,
      createdAt: q.createdAt.toISOString(),
      familyRule: q.familyRule,
      groups,
      cells: views,
      shortLots,
      left,
      projectedFinish: finish,
      projectionNote,
    };
    return { detail, lots: lotDetails, runs, judgedRuns };
  }

  /**
   * When a cell can be done: the latest scheduled window of its booked or running runs; for a cell
   * with no live run, the earliest proposal for the part's current plan of the kind (read only).
   */
  private async projectCell(
    c: QualificationCellEntity,
    state: string,
    runs: QualCellRun[],
    deviceTypeId: string,
    nowMs: number,
  ): Promise<{ at: string | null; note: string | null }> {
    if (state === 'passed' || state === 'waived' || state === 'failed') return { at: null, note: null };
    if (c.planKind === null) return { at: null, note: 'An outside result is to be recorded.' };
    if (state === 'awaiting-verdict')
      return { at: new Date(nowMs).toISOString(), note: 'Stress done; the verdict waits for readings or dispositions.' };
    const ends = runs.filter((r) => r.projectedEnd).map((r) => Date.parse(r.projectedEnd!));
    if (ends.length) return { at: new Date(Math.max(...ends)).toISOString(), note: 'Scheduled window of its runs.' };
    const plan = await this.ds.manager.findOne(StressPlanEntity, {
      where: { deviceTypeId, kind: c.planKind as StressPlanEntity['kind'], current: true },
      order: { createdAt: 'DESC' },
    });
    if (!plan) return { at: null, note: `No current plan of kind ${c.planKind} for this part yet.` };
    try {
      const p = await this.ctx.services.runs.propose({ planId: plan.id, lotIds: [c.lotId], sampleSize: c.plannedSample });
      const best = p.options[0];
      if (!best) return { at: null, note: p.problems[0] ?? 'No rig can take this run now.' };
      return { at: best.end, note: `Earliest proposal: ${best.rigCode} (plan ${plan.name}).` };
    } catch (err) {
      return { at: null, note: err instanceof Error ? err.message : 'No proposal.' };
    }
  }
}

/** The qualification's withdrawn records (oldest first) and the names of everyone who recorded or withdrew something. */
async function cellRecords(m: EntityManager, qualificationId: string, cells: QualificationCellEntity[]) {
  const withdrawals = await m.find(QualificationCellWithdrawalEntity, { where: { qualificationId }, order: { withdrawnAt: 'ASC' } });
  const ids = [...cells.flatMap((c) => [c.waivedById, c.externalRecordedById]), ...withdrawals.map((w) => w.withdrawnById)];
  const userIds = [...new Set(ids.filter((x): x is string => !!x))];
  const users = new Map((userIds.length ? await m.find(UserEntity, { where: { id: In(userIds) } }) : []).map((u) => [u.id, u.name]));
  return { withdrawals, users };
}

/** A cell's waiver, outside result and withdrawn records as the screens and the report show them (names, not ids). */
function recordViews(
  c: QualificationCellEntity,
  users: Map<string, string>,
  withdrawals: QualificationCellWithdrawalEntity[],
): Pick<QualCellView, 'waiver' | 'external' | 'withdrawn'> {
  return {
    withdrawn: withdrawals
      .filter((w) => w.cellId === c.id)
      .map((w) => ({
        record: w.record,
        text: w.withdrawn.text,
        recordedBy: w.withdrawn.by,
        recordedAt: w.withdrawn.at,
        reason: w.reason,
        by: users.get(w.withdrawnById ?? '') ?? 'unknown',
        at: w.withdrawnAt.toISOString(),
      })),
    waiver: c.waiverReason
      ? { reason: c.waiverReason, by: users.get(c.waivedById ?? '') ?? 'unknown', at: c.waivedAt!.toISOString() }
      : null,
    external: c.externalResult
      ? {
          result: c.externalResult,
          by: c.externalBy ?? '',
          at: c.externalAt!.toISOString(),
          document: c.externalDocument ?? '',
          recordedBy: users.get(c.externalRecordedById ?? '') ?? 'unknown',
        }
      : null,
  };
}

/** What is left (missing lots, open cells) in words, and the latest projected finish of the open cells when each has one. */
function whatIsLeft(
  groups: QualGroup[],
  shortLots: QualificationDetail['shortLots'],
  views: QualCellView[],
): { left: string[]; finish: string | null; projectionNote: string | null } {
  const groupName = new Map(groups.map((g) => [g.key, g.name]));
  const left = [
    ...shortLots.map((s) => `${groupName.get(s.groupKey)}: needs ${s.wanted} lots, ${s.chosen} chosen.`),
    ...views
      .filter((v) => !CELL_DONE_STATES.includes(v.state))
      .map((v) => `${groupName.get(v.groupKey)} on lot ${v.lotCode}: ${CELL_STATE_LABEL[v.state].toLowerCase()}.`),
  ];
  const open = views.filter((v) => !CELL_DONE_STATES.includes(v.state) && v.state !== 'failed');
  if (open.length === 0) return { left, finish: null, projectionNote: null };
  const unprojected = open.filter((v) => v.projectedFinish === null);
  if (unprojected.length)
    return {
      left,
      finish: null,
      projectionNote: `No finish can be projected while ${unprojected.length} open cell${unprojected.length === 1 ? ' has' : 's have'} no booking or proposal.`,
    };
  return {
    left,
    finish: new Date(Math.max(...open.map((v) => Date.parse(v.projectedFinish!)))).toISOString(),
    projectionNote:
      'Latest projected end of the open cells: booked runs at their scheduled windows, unbooked cells at the earliest proposal each (proposals are made one cell at a time, so cells competing for one rig may finish later).',
  };
}

/** The lot verdict's judgement of a cell's kind on its lot: the worst of the lot's plans of that kind (VERDICT_RANK, as judgeLot combines plans). */
export function cellJudgement(plans: readonly LotPlanView[] | undefined, planKind: string | null): LotPlanView | null {
  if (!plans || planKind === null) return null;
  const own = plans.filter((p) => p.kind === planKind && p.runs.length > 0);
  return [...own].sort((a, b) => VERDICT_RANK[a.verdict] - VERDICT_RANK[b.verdict])[0] ?? null;
}

export function summaryOf(d: QualificationDetail): QualificationSummary {
  const { id, code, name, templateKey, templateName, deviceTypes, lots, status, cellsDone, cellsTotal, createdAt } = d;
  return { id, code, name, templateKey, templateName, deviceTypes, lots, status, cellsDone, cellsTotal, createdAt };
}
