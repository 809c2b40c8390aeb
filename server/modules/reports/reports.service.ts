/**
 * Reports from the figures the screens show: the lot report (PDF and CSV) and the certificate of
 * conformance. Everything is read through the services that serve the lot view (analytics.lot),
 * the drift view (measurements.drift) and the signatures (signoff.forLot), so a report cannot
 * disagree with the screens; FIT comes from shared/reliability/mechanisms via the lot view.
 */
import type { DataSource } from 'typeorm';
import { criteriaWords } from '../../../shared/domain/criteria-words';
import { formatUtc } from '../../../shared/domain/format';
import { RECORD_DEVIATION_LABEL } from '../../../shared/domain/records';
import { SIGNATURE_MEANING_LABEL } from '../../../shared/domain/signoff';
import { LOT_VERDICT_LABEL } from '../../../shared/domain/verdicts';
import { DISPOSITION_LABEL, type DispositionKind } from '../../../shared/evidence';
import { describeParameters } from '../../../shared/reliability/mechanism-names';
import type { LotDetail } from '../../../shared/schemas/analytics';
import type { RunDriftResult } from '../../../shared/schemas/measurements';
import { conflict, notFound } from '../../http/errors';
import type { AnalyticsService } from '../analytics/analytics.service';
import type { LotsService } from '../lots/lots.service';
import type { MeasurementsService } from '../measurements/measurements.service';
import type { SignoffService } from '../signoff/signoff.service';
import type { DriftChart } from './drift-chart';
import type { LotReportData, ReportDeviation, ReportDeviceRow, ReportEquipment, ReportReliability } from './report-data';
import { certificateNumber, certificatePdf, certificateRefusal } from './certificate';
import { lotReportCsv, lotReportPdf } from './lot-report';
import { lotDispositions, lotEquipment, lotTrips, planConditions, type DispositionRow, type TripRow } from './reports.data';

const iso = (d: Date | string | null) => (d === null ? null : new Date(d).toISOString());

/** "1-8, 12, 14-15" from socket numbers. */
export function socketRanges(sockets: readonly number[]): string {
  const s = [...new Set(sockets)].sort((a, b) => a - b);
  const out: string[] = [];
  for (let i = 0; i < s.length;) {
    let j = i;
    while (j + 1 < s.length && s[j + 1] === s[j] + 1) j++;
    out.push(i === j ? String(s[i]) : `${s[i]}-${s[j]}`);
    i = j + 1;
  }
  return out.join(', ') || '-';
}

export class ReportsService {
  constructor(
    private readonly ds: DataSource,
    private readonly analytics: AnalyticsService,
    private readonly measurements: MeasurementsService,
    private readonly signoff: SignoffService,
    private readonly lots: LotsService,
    private readonly now: () => Date,
  ) {}

  async lotReportPdf(lotId: string, runId?: string): Promise<{ lotCode: string; pdf: Buffer }> {
    const data = await this.lotReportData(lotId, runId);
    return { lotCode: data.lot.code, pdf: await lotReportPdf(data) };
  }

  async lotReportCsv(lotId: string, runId?: string): Promise<{ lotCode: string; csv: string }> {
    const data = await this.lotReportData(lotId, runId);
    return { lotCode: data.lot.code, csv: lotReportCsv(data) };
  }

  /** The certificate of conformance, or 409 with the reason (certificate.ts states the rule). */
  async certificate(lotId: string): Promise<{ lotCode: string; number: string; pdf: Buffer }> {
    const report = await this.lotReportData(lotId);
    const refusal = certificateRefusal(report);
    if (refusal) throw conflict(refusal);
    const plans = await planConditions(
      this.ds.manager,
      report.plans.map((p) => p.planId),
    );
    return {
      lotCode: report.lot.code,
      number: certificateNumber(report.lot.code, report.evidenceHash),
      pdf: await certificatePdf({ report, plans }),
    };
  }

  /**
   * Everything the lot report draws. `runId` picks the run whose drift is charted (one of the lot's
   * runs; by default the run the lot view analyses).
   */
  async lotReportData(lotId: string, runId?: string): Promise<LotReportData> {
    const d = await this.analytics.lot(lotId);
    const lot = await this.lots.get(lotId);
    const m = this.ds.manager;
    const [dispositions, trips, equipment, signoff] = await Promise.all([
      lotDispositions(m, lotId),
      lotTrips(m, lotId),
      lotEquipment(m, lotId),
      this.signoff.forLot(lotId),
    ]);
    const runIds = new Set([...(d.run ? [d.run.id] : []), ...d.otherRuns.map((r) => r.id), ...equipment.map((e) => e.run_id)]);
    if (runId && !runIds.has(runId)) throw notFound(`Run ${runId} of lot ${d.lotCode}`);
    const chartRun = runId ?? d.run?.id ?? null;
    const drift = chartRun ? await this.measurements.drift(chartRun) : null;
    const run = drift ? (equipment.find((e) => e.run_id === chartRun) ?? null) : null;

    const devices = deviceRows(d, dispositions);
    const deviations = deviationRows(d, dispositions, trips);

    return {
      generatedAt: this.now(),
      lot: {
        id: lot.id,
        code: lot.code,
        partNumber: lot.partNumber,
        quantity: lot.quantity,
        dateCode: lot.dateCode,
        notes: lot.notes,
        waferLot: lot.waferLot,
        assemblyLot: lot.assemblyLot,
        dieRevision: lot.dieRevision,
      },
      verdict: d.verdict,
      verdictLabel: LOT_VERDICT_LABEL[d.verdict],
      reasons: d.reasons,
      criteria: d.criteria ? criteriaWords(d.criteria) : null,
      plans: d.plans.map((p) => ({
        planId: p.planId,
        planName: p.planName,
        kind: p.kind,
        verdict: p.verdict,
        runs: p.runs.map((r) => r.runCode),
        planned: p.sample.planned,
        booked: p.sample.booked,
        judged: p.sample.judged,
        removed: p.sample.removed,
        failures: p.sample.failures,
        acceptNumber: p.sample.acceptNumber,
        confidence: p.sample.confidence,
        planLtpd: p.sample.planLtpd,
        demonstratedLtpd: p.sample.demonstratedLtpd,
        deviation: p.sample.deviation
          ? `booked ${p.sample.deviation.sampleSize} devices: ${p.sample.deviation.reason} (${p.sample.deviation.by})`
          : null,
        reasons: p.reasons,
      })),
      run: run
        ? { id: run.run_id, code: run.run_code, state: run.state, stressHours: d.run?.id === run.run_id ? d.run.stressHours : 0 }
        : d.run,
      readPoints: d.readPoints,
      charts: drift ? driftCharts(drift, lotId) : [],
      devices,
      reliability: reliabilityRows(d),
      equipment: equipment.map((e): ReportEquipment => ({
        runCode: e.run_code,
        runState: e.state,
        rigCode: e.rig_code,
        rigName: e.rig_name,
        sockets: socketRanges(e.sockets ?? []),
        startedAt: iso(e.started_at),
        finishedAt: iso(e.finished_at),
        calibrationDoneAt: iso(e.calibration_done_at),
        calibrationDueAt: iso(e.calibration_due_at),
        interlockTestedAt: iso(e.interlock_tested_at),
      })),
      signatures: signoff.signatures.map((s) => ({
        name: s.signer.name,
        email: s.signer.email,
        meaning: SIGNATURE_MEANING_LABEL[s.meaning],
        verdict: LOT_VERDICT_LABEL[s.verdict],
        signedAt: s.signedAt,
        dataHash: s.dataHash,
        stale: s.stale,
      })),
      evidenceHash: signoff.currentHash,
      deviations,
      caution: d.caution,
      detail: d,
    };
  }
}

/** The devices every plan's verdict counts (each run and device once), with drift on the analysed run and dispositions. */
function deviceRows(d: LotDetail, dispositions: DispositionRow[]): ReportDeviceRow[] {
  const dispositionText = new Map(
    dispositions.map((x) => [
      `${x.run_id}:${x.device_id}`,
      `${DISPOSITION_LABEL[x.kind as DispositionKind] ?? x.kind} from ${+Number(x.read_point_h).toPrecision(6)} h: ${x.reason} (${x.by_name}, ${formatUtc(x.at)})`,
    ]),
  );
  const latest = new Map(d.devices.map((x) => [x.deviceId, x]));
  const devices: ReportDeviceRow[] = [];
  const seen = new Set<string>();
  for (const p of d.plans) {
    for (const x of p.devices) {
      const key = `${x.runId}:${x.deviceId}`;
      if (seen.has(key)) continue;
      seen.add(key);
      const r = p.runs.find((y) => y.runId === x.runId);
      const onAnalysed = d.run?.id === x.runId ? latest.get(x.deviceId) : undefined;
      devices.push({
        serial: x.serial,
        runCode: r?.runCode ?? '',
        rigCode: r?.rigCode ?? null,
        socketIndex: x.socketIndex,
        status: x.status,
        failedAtH: x.failedAtH,
        failedBecause: [...x.failedBecause, ...(x.removedBecause ? [x.removedBecause] : [])].join('; '),
        latestH: onAnalysed?.latestH ?? null,
        hfeChangePct: onAnalysed?.hfeChangePct ?? null,
        icboRatio: onAnalysed?.icboRatio ?? null,
        vcesatShiftMv: onAnalysed?.vcesatShiftMv ?? null,
        disposition: dispositionText.get(key) ?? null,
      });
    }
  }
  devices.sort((a, b) => a.runCode.localeCompare(b.runCode) || a.socketIndex - b.socketIndex);

  return devices;
}

/** Sample deviations, record deviations, dispositions and trips, in that order. */
function deviationRows(d: LotDetail, dispositions: DispositionRow[], trips: TripRow[]): ReportDeviation[] {
  const deviations: ReportDeviation[] = [];
  for (const p of d.plans) {
    const dev = p.sample.deviation;
    if (dev)
      deviations.push({
        kind: 'sample',
        text: `${p.planName}: sample of ${dev.sampleSize} instead of ${p.sample.planned}: ${dev.reason} (${dev.by}, ${formatUtc(dev.at)})`,
      });
  }
  for (const v of d.records.deviations)
    deviations.push({
      kind: 'record',
      text: `${v.runCode} ${v.serial} at ${v.readPointH} h, version ${v.version}: ${v.deviation.map((k) => RECORD_DEVIATION_LABEL[k]).join('; ')}; reason: ${v.reason ?? ''} (${v.enteredByName ?? 'unknown'}, ${formatUtc(v.recordedAt)})`,
    });
  for (const x of dispositions)
    deviations.push({
      kind: 'disposition',
      text: `${x.run_code} ${x.serial}: ${DISPOSITION_LABEL[x.kind as DispositionKind] ?? x.kind} from ${+Number(x.read_point_h).toPrecision(6)} h: ${x.reason} (${x.by_name}, ${formatUtc(x.at)})`,
    });
  for (const t of trips)
    deviations.push({
      kind: 'trip',
      text: `${t.run_code} ${t.rig_code ?? ''} socket ${t.socket_index} (${t.serial}) tripped${t.tripped_at ? ` at ${formatUtc(t.tripped_at)}` : ''}: ${t.trip_reason ?? 'no reason recorded'}`,
    });

  return deviations;
}

/** FIT per plan (each plan stresses one mechanism), as the lot view computed it. */
function reliabilityRows(d: LotDetail): ReportReliability[] {
  return d.plans.flatMap((p): ReportReliability[] => {
    if (p.fit)
      return [
        {
          planName: p.planName,
          mechanism: p.fit.mechanismLabel,
          model: p.fit.model,
          parameters: describeParameters(p.fit.parameters),
          failures: p.fit.failures,
          devices: p.fit.devices,
          deviceHours: p.fit.deviceHours,
          equivalentDeviceHours: p.fit.equivalentDeviceHours,
          accelerationFactor: p.fit.accelerationFactor,
          fit60: p.fit.fit60,
          fit90: p.fit.fit90,
          method: p.fit.method,
          unavailable: null,
        },
      ];
    if (p.fitUnavailable)
      return [
        {
          planName: p.planName,
          mechanism: p.kind.toUpperCase(),
          model: '',
          parameters: '',
          failures: p.exposure.failures,
          devices: p.exposure.devices,
          deviceHours: 0,
          equivalentDeviceHours: 0,
          accelerationFactor: 0,
          fit60: null,
          fit90: null,
          method: '',
          unavailable: p.fitUnavailable,
        },
      ];
    return [];
  });
}

/** hFE change, ICBO ratio and VCE(sat) shift per device of the lot against the read points, with the plan's limits. */
export function driftCharts(drift: RunDriftResult, lotId: string): DriftChart[] {
  const c = drift.criteria;
  const mine = drift.devices.filter((x) => x.lotId === lotId);
  const series = (
    pick: (p: NonNullable<RunDriftResult['devices'][number]['readPoints'][number]['parameters']>[number]) => number | null,
    name: string,
  ) =>
    mine.map((x) => ({
      label: x.serial,
      failed: x.firstFailedH !== null,
      points: x.readPoints.flatMap((r) => {
        if (r.readPointH === 0) return [{ x: 0, y: name === 'icbo' ? 1 : 0 }];
        const p = r.parameters?.find((q) => q.parameter === name);
        const v = p ? pick(p) : null;
        return v === null || !Number.isFinite(v) ? [] : [{ x: r.readPointH, y: v }];
      }),
    }));
  const floorNa = +(c.leakageFloorA * 1e9).toPrecision(3);
  return [
    {
      title: `hFE change from time zero (run ${drift.runCode})`,
      xLabel: 'Stress hours (read points)',
      yLabel: 'hFE change (%)',
      series: series((p) => p.changePct, 'hfe'),
      limits: [
        { y: c.hfeChangePct, label: `+${c.hfeChangePct} %` },
        { y: -c.hfeChangePct, label: `-${c.hfeChangePct} %` },
      ],
    },
    {
      title: `ICBO relative to time zero (run ${drift.runCode})`,
      xLabel: 'Stress hours (read points)',
      yLabel: 'ICBO / ICBO at time zero',
      series: series((p) => p.ratio, 'icbo'),
      limits: [{ y: c.leakageMultiple, label: `${c.leakageMultiple}x initial` }],
      note: `A device may also rise by up to ${floorNa} nA, so one whose time-zero ICBO was below ${+((c.leakageFloorA / Math.max(c.leakageMultiple - 1, 1e-12)) * 1e9).toPrecision(3)} nA can pass above the line.`,
    },
    {
      title: `VCE(sat) shift from time zero (run ${drift.runCode})`,
      xLabel: 'Stress hours (read points)',
      yLabel: 'VCE(sat) shift (mV)',
      series: series((p) => (p.delta === null ? null : p.delta * 1000), 'vcesat'),
      limits: [
        { y: c.vcesatShiftV * 1000, label: `+${+(c.vcesatShiftV * 1000).toPrecision(3)} mV` },
        { y: -c.vcesatShiftV * 1000, label: `-${+(c.vcesatShiftV * 1000).toPrecision(3)} mV` },
      ],
    },
  ];
}
