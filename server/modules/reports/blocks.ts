/**
 * Reusable PDF blocks of the lot report, the certificate and the qualification report. Each block
 * writes at the cursor, keeps its heading with its first lines and leaves the cursor under itself.
 * Signatures are stable: `writeLotSection(doc, data)`, `drawDriftChart(doc, box, chart)`,
 * `writeDeviceTable(doc, rows)`, `writeSignatures(doc, signatures, hash)`, `writeEquipment(doc, rows)`,
 * `writeReliability(doc, rows)`, `writeDeviations(doc, rows)`.
 */
import { formatUtc } from '../../../shared/domain/format';
import { drawDriftChart } from './drift-chart';
import {
  ALERT,
  CAUTION_INK,
  contentWidth,
  field,
  fmt,
  heading,
  INK,
  keepTogether,
  MUTED,
  para,
  pctText,
  table,
  type Pdf,
  FONT,
} from './pdf-doc';
import type {
  LotReportData,
  ReportDeviation,
  ReportDeviceRow,
  ReportEquipment,
  ReportLot,
  ReportPlan,
  ReportReliability,
  ReportSignature,
} from './report-data';

const when = (iso: string | null) => (iso ? formatUtc(iso) : '-');
const day = (iso: string | null) => (iso ? iso.slice(0, 10) : 'none on record');

/** Part, lot, quantity and the traceability fields. */
export function writeTraceability(doc: Pdf, lot: ReportLot): void {
  field(doc, 'Part number', lot.partNumber);
  field(doc, 'Lot', `${lot.code} (${lot.quantity.toLocaleString('en-GB')} devices)`);
  field(doc, 'Date code', lot.dateCode);
  field(doc, 'Wafer lot', lot.waferLot || 'not recorded');
  field(doc, 'Assembly lot', lot.assemblyLot || 'not recorded');
  field(doc, 'Die revision', lot.dieRevision || 'not recorded');
  if (lot.notes) field(doc, 'Notes', lot.notes);
}

/** Each plan's sample, failures and LTPD, as the verdict judged them. */
export function writePlanSamples(doc: Pdf, plans: readonly ReportPlan[]): void {
  table(
    doc,
    [
      { header: 'Plan', width: 118 },
      { header: 'Runs', width: 70 },
      { header: 'Verdict', width: 58 },
      { header: 'Planned', width: 40, align: 'right' },
      { header: 'Judged', width: 38, align: 'right' },
      { header: 'Failed', width: 34, align: 'right' },
      { header: 'Accept', width: 34, align: 'right' },
      { header: 'LTPD plan', width: 52, align: 'right' },
      { header: 'LTPD shown', width: 55, align: 'right' },
    ],
    plans.map((p) => [
      p.planName,
      p.runs.join(' + '),
      verdictWord(p.verdict),
      String(p.planned),
      String(p.judged),
      String(p.failures),
      String(p.acceptNumber),
      pctText(p.planLtpd),
      p.demonstratedLtpd === null ? 'none' : pctText(p.demonstratedLtpd),
    ]),
    (i) => (plans[i].failures > plans[i].acceptNumber ? ALERT : null),
  );
  doc.font(FONT.regular).fontSize(7.5).fillColor(MUTED);
  para(
    doc,
    `LTPD at ${plans[0] ? fmt(plans[0].confidence * 100) : '90'} % confidence: the plan's from its sample and accept number, the one shown from the devices judged and the failures seen (exact binomial).`,
  );
  for (const p of plans) if (p.deviation) para(doc, `${p.planName}: ${p.deviation}`);
  doc.fillColor(INK).fontSize(9.5);
}

const verdictWord = (v: string) => v.charAt(0).toUpperCase() + v.slice(1).replace(/-/g, ' ');

/** The devices the verdict counts, failures in red, with dispositions and their reasons. */
export function writeDeviceTable(doc: Pdf, rows: readonly ReportDeviceRow[]): void {
  if (!rows.length) {
    para(doc, 'No devices are booked for this lot yet.');
    return;
  }
  table(
    doc,
    [
      { header: 'Serial', width: 46 },
      { header: 'Run / socket', width: 102 },
      { header: 'Status', width: 34 },
      { header: 'Failed at', width: 40, align: 'right' },
      { header: 'hFE %', width: 34, align: 'right' },
      { header: 'ICBO x', width: 34, align: 'right' },
      { header: 'VCEsat mV', width: 40, align: 'right' },
      { header: 'Why / disposition', width: contentWidth(doc) - 330 },
    ],
    rows.map((r) => [
      r.serial,
      `${r.runCode} ${r.rigCode ?? ''} #${r.socketIndex}`.replace(/\s+/g, ' '),
      r.status,
      r.failedAtH === null ? '' : `${fmt(r.failedAtH, 5)} h`,
      fmt(r.hfeChangePct),
      fmt(r.icboRatio),
      fmt(r.vcesatShiftMv),
      [r.failedBecause, r.disposition].filter(Boolean).join(' | '),
    ]),
    (i) => (rows[i].status === 'fail' ? ALERT : null),
  );
  doc.font(FONT.regular).fontSize(7.5).fillColor(MUTED);
  para(
    doc,
    'Drift columns: the latest read point of the run analysed; hFE change in %, ICBO as a ratio to time zero, VCE(sat) shift in mV.',
  );
  doc.fillColor(INK).fontSize(9.5);
}

/** Electronic signatures: printed name, meaning, time, and the hash of what each signs. */
export function writeSignatures(doc: Pdf, signatures: readonly ReportSignature[], currentHash: string): void {
  if (!signatures.length) {
    para(doc, 'Not signed: nobody has signed this verdict yet.');
  }
  for (const s of signatures) {
    keepTogether(doc, 44);
    doc
      .font(FONT.bold)
      .fontSize(9.5)
      .fillColor(s.stale ? MUTED : INK);
    para(doc, `${s.name} <${s.email}> - ${s.meaning}`);
    doc.font(FONT.regular).fontSize(8.5);
    para(
      doc,
      `Signed ${formatUtc(s.signedAt)} for the verdict "${s.verdict}"${s.stale ? '; the data has changed since, so this signature no longer covers the verdict' : ''}.`,
    );
    doc.moveDown(0.2).font(FONT.mono).fontSize(7.5);
    para(doc, `SHA-256 ${s.dataHash}`);
    doc.moveDown(0.3);
  }
  doc.font(FONT.regular).fontSize(7.5).fillColor(MUTED);
  para(
    doc,
    `The judged evidence as it stands now hashes to SHA-256 ${currentHash} (canonical JSON; a signature covers the verdict when its hash is the same).`,
  );
  doc.fillColor(INK).fontSize(9.5);
}

/** Rigs, sockets and the service records the start permit read (calibration, interlock test). */
export function writeEquipment(doc: Pdf, rows: readonly ReportEquipment[]): void {
  if (!rows.length) {
    para(doc, 'No run has held this lot yet.');
    return;
  }
  table(
    doc,
    [
      { header: 'Run', width: 62 },
      { header: 'Rig', width: 80 },
      { header: 'Sockets', width: 44 },
      { header: 'Stress from - to', width: 118 },
      { header: 'Calibrated / due', width: 106 },
      { header: 'Interlocks tested', width: contentWidth(doc) - 410 },
    ],
    rows.map((r) => [
      `${r.runCode} (${r.runState})`,
      r.rigCode ? `${r.rigCode} ${r.rigName ?? ''}` : 'none',
      r.sockets,
      `${when(r.startedAt)} - ${r.finishedAt ? when(r.finishedAt) : 'running'}`,
      `${day(r.calibrationDoneAt)} / ${day(r.calibrationDueAt)}`,
      day(r.interlockTestedAt),
    ]),
  );
  doc.font(FONT.regular).fontSize(7.5).fillColor(CAUTION_INK);
  para(
    doc,
    'A software trip is no substitute for the rig hardware interlocks: the dates above are the records the start permit checked, not a test of the interlocks. Follow the lab safety rules and local codes for high voltage and hot ovens.',
  );
  doc.fillColor(INK).fontSize(9.5);
}

/** FIT per mechanism (never pooled) with its confidence, model and method (shared/reliability/mechanisms). */
export function writeReliability(doc: Pdf, rows: readonly ReportReliability[]): void {
  if (!rows.length) {
    para(doc, 'No failure rate yet: no read point after time zero.');
    return;
  }
  table(
    doc,
    [
      { header: 'Plan / mechanism', width: 130 },
      { header: 'Fails / devices', width: 52, align: 'right' },
      { header: 'Device-h', width: 56, align: 'right' },
      { header: 'AF', width: 40, align: 'right' },
      { header: 'Equiv. device-h', width: 66, align: 'right' },
      { header: 'FIT 60 %', width: 52, align: 'right' },
      { header: 'FIT 90 %', width: contentWidth(doc) - 396, align: 'right' },
    ],
    rows.map((r) =>
      r.unavailable
        ? [`${r.planName}: ${r.mechanism}`, `${r.failures}`, '-', '-', '-', '-', r.unavailable]
        : [
            `${r.planName}: ${r.mechanism}`,
            `${r.failures} / ${r.devices}`,
            fmt(r.deviceHours, 5),
            fmt(r.accelerationFactor, 4),
            fmt(r.equivalentDeviceHours, 5),
            fmt(r.fit60, 4),
            fmt(r.fit90, 4),
          ],
    ),
  );
  doc.font(FONT.regular).fontSize(7.5).fillColor(MUTED);
  for (const r of rows) if (!r.unavailable) para(doc, `${r.planName}: ${r.model}; ${r.parameters}. Method: ${r.method}.`);
  doc.fillColor(INK).fontSize(9.5);
}

/** Sample deviations, record deviations, dispositions and trips: everything that departs from the plan. */
export function writeDeviations(doc: Pdf, rows: readonly ReportDeviation[]): void {
  if (!rows.length) {
    para(doc, 'None recorded.');
    return;
  }
  const label: Record<ReportDeviation['kind'], string> = { sample: 'Sample', record: 'Record', disposition: 'Disposition', trip: 'Trip' };
  table(
    doc,
    [
      { header: 'Kind', width: 60 },
      { header: 'What', width: contentWidth(doc) - 60 },
    ],
    rows.map((r) => [label[r.kind], r.text]),
  );
}

/**
 * One lot in full: traceability, verdict, samples, drift charts, devices, reliability, equipment,
 * deviations and signatures. The lot report is this section on its own; the qualification report
 * writes one per lot.
 */
export function writeLotSection(doc: Pdf, d: LotReportData): void {
  heading(doc, 'Lot and traceability', 100);
  writeTraceability(doc, d.lot);
  if (d.criteria) field(doc, 'Failure criteria', d.criteria);

  heading(doc, `Verdict: ${d.verdictLabel}`, 80);
  for (const r of d.reasons) para(doc, `- ${r}`);
  doc.moveDown(0.3);
  writePlanSamples(doc, d.plans);

  if (d.charts.length) {
    heading(doc, `Drift per device${d.run ? ` on run ${d.run.code}` : ''}`, 200);
    const w = contentWidth(doc);
    for (const c of d.charts) {
      keepTogether(doc, 200);
      drawDriftChart(doc, { x: doc.page.margins.left, y: doc.y, w, h: 190 }, c);
      doc.moveDown(0.6);
    }
  }

  heading(doc, 'Devices', 80);
  writeDeviceTable(doc, d.devices);
  heading(doc, 'Failure rate per mechanism', 80);
  writeReliability(doc, d.reliability);
  heading(doc, 'Equipment', 80);
  writeEquipment(doc, d.equipment);
  heading(doc, 'Deviations, dispositions and trips', 60);
  writeDeviations(doc, d.deviations);
  heading(doc, 'Signatures', 60);
  writeSignatures(doc, d.signatures, d.evidenceHash);
}
