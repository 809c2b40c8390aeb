/**
 * The lot report: a PDF built from the report blocks (blocks.ts) and the same data as CSV
 * (cells through csv.ts, which neutralises formula starts).
 */
import { formatUtc } from '../../../shared/domain/format';
import { LOT_VERDICT_LABEL, type LotDetail, type LotReadingVersion } from '../../../shared/schemas/analytics';
import { RECORD_DEVIATION_LABEL } from '../../../shared/domain/records';
import { describeParameters } from '../../../shared/reliability/mechanisms';
import { writeLotSection } from './blocks';
import { CAUTION_INK, footers, heading, MUTED, newPdf, para, pdfText, FONT } from './pdf-doc';
import type { LotReportData } from './report-data';
import { CsvSheet, type Cell } from './csv';

const PARAM = { hfe: 'hFE', icbo: 'ICBO', vcesat: 'VCE(sat)' } as const;

/** The lot report as CSV: the same data as the PDF, one block after another, blank lines between. */
export function lotReportCsv(r: LotReportData): string {
  const s = new CsvSheet();
  writeLotSummaryCsv(s, r);
  writePlanVerdictsCsv(s, r.detail);
  writeLifeEstimateCsv(s, r.detail);
  writeReadPointsCsv(s, r.detail);
  writeDevicesCsv(s, r.detail);
  writeRecordsCsv(s, r.detail);
  writeReportBlocksCsv(s, r);
  return s.text({ bom: true });
}

/** The lot, its part and traceability, the plan and run, the verdict and its reasons. */
function writeLotSummaryCsv(s: CsvSheet, r: LotReportData) {
  const d = r.detail;
  s.kv('Emberlot lot report', `Generated ${formatUtc(r.generatedAt)}`);
  s.kv('Lot', d.lotCode);
  s.kv('Device type', d.partNumber);
  s.kv('Date code', d.dateCode);
  s.kv('Wafer lot', r.lot.waferLot);
  s.kv('Assembly lot', r.lot.assemblyLot);
  s.kv('Die revision', r.lot.dieRevision);
  s.kv('Lot notes', r.lot.notes);
  s.kv('Failure criteria', r.criteria);
  s.kv(
    'Plan',
    d.plan
      ? `${d.plan.name} (${d.plan.kind}, ${d.plan.chamberC} °C, ${d.plan.durationH} h, n ${d.plan.sampleSize}, accept ${d.plan.acceptNumber})`
      : 'none',
  );
  s.kv('Run', d.run ? `${d.run.code} (${d.run.state}, ${d.run.stressHours} h)` : 'none');
  s.kv('Verdict', LOT_VERDICT_LABEL[d.verdict]);
  for (const r of d.reasons) s.kv('Reason', r);
}

/** Per plan: its verdict, the sample against LTPD, incomplete read points, the degradation note. */
function writePlanVerdictsCsv(s: CsvSheet, d: LotDetail) {
  for (const p of d.plans) {
    const sample = p.sample;
    s.kv(`Plan verdict: ${p.planName}`, LOT_VERDICT_LABEL[p.verdict]);
    s.kv(
      `Sample: ${p.planName}`,
      `runs ${p.runs.map((r) => r.runCode).join(' + ')}; planned ${sample.planned}, booked ${sample.booked}, judged ${sample.judged}, failures ${sample.failures}; LTPD demonstrated ${sample.demonstratedLtpd === null ? '—' : `${+(sample.demonstratedLtpd * 100).toPrecision(3)} %`}, plan ${+(sample.planLtpd * 100).toPrecision(3)} % at ${sample.confidence * 100} %`,
    );
    if (sample.deviation)
      s.kv(
        `Sample deviation: ${p.planName}`,
        `${sample.deviation.sampleSize} devices: ${sample.deviation.reason} (${sample.deviation.by}, ${sample.deviation.at})`,
      );
    for (const r of p.readPoints)
      if (r.due && !r.complete)
        s.kv(`Incomplete read point (h): ${p.planName}`, `${r.hours}: ${r.missing.map((m) => `${m.serial} (${m.why})`).join('; ')}`);
    s.kv(`Degradation: ${p.planName}`, p.degradation.note);
  }
}

/** Pseudo-failure time, the failure-rate fit and its constants, FIT per plan, the caution. */
function writeLifeEstimateCsv(s: CsvSheet, d: LotDetail) {
  s.kv('Pseudo-failure time (h)', d.pseudoFailureH);
  s.kv('Pseudo-failure parameter', d.pseudoFailureParameter ? PARAM[d.pseudoFailureParameter] : '');
  if (d.fit) {
    s.kv('Failure mechanism', d.fit.mechanismLabel);
    s.kv('Model', d.fit.model);
    s.kv('Model parameters', describeParameters(d.fit.parameters));
    s.kv(
      'Junction over credited hours (°C)',
      d.fit.junction.tjMeanC === null
        ? ''
        : `mean ${+d.fit.junction.tjMeanC.toPrecision(4)}, ${+d.fit.junction.tjMinC!.toPrecision(4)} to ${+d.fit.junction.tjMaxC!.toPrecision(4)}`,
    );
    s.kv('Acceleration factor', d.fit.accelerationFactor);
    s.kv('Device-hours', d.fit.deviceHours);
    s.kv('Equivalent device-hours', d.fit.equivalentDeviceHours);
    s.kv('FIT upper bound 60 %', d.fit.fit60);
    s.kv('FIT upper bound 90 %', d.fit.fit90);
    s.kv(
      'Constants',
      `k ${d.fit.constants.boltzmannEvPerK} eV/K (${d.fit.constants.source}), Ea ${d.fit.constants.eaEv} eV, use ${d.fit.constants.useC} °C, stress ${+d.fit.constants.stressC.toPrecision(4)} °C (${d.fit.constants.stressBasis})`,
    );
  }
  for (const p of d.plans) {
    if (p.fit)
      s.kv(`FIT 60 % / 90 %: ${p.planName} (${p.fit.mechanismLabel})`, `${+p.fit.fit60.toPrecision(4)} / ${+p.fit.fit90.toPrecision(4)}`);
    else if (p.fitUnavailable) s.kv(`FIT: ${p.planName}`, p.fitUnavailable);
  }
  s.kv('Caution', d.caution);
}

/** The drift table: one row per read point. */
function writeReadPointsCsv(s: CsvSheet, d: LotDetail) {
  s.blank();
  s.row([
    'Read point (h)',
    'Devices',
    'Late',
    'hFE change mean %',
    'hFE change sd %',
    'hFE change p5 %',
    'hFE change median %',
    'hFE change p95 %',
    'ICBO ratio median',
    'ICBO ratio p95',
    'VCE(sat) shift mean mV',
    'Failing',
    'Cumulative fails',
  ]);
  for (const r of d.readPoints) {
    s.row([
      r.hours,
      r.devicesMeasured,
      r.late,
      r.hfeChangePct?.mean,
      r.hfeChangePct?.sd,
      r.hfeChangePct?.p5,
      r.hfeChangePct?.median,
      r.hfeChangePct?.p95,
      r.icboRatio?.median,
      r.icboRatio?.p95,
      r.vcesatShiftMv?.mean,
      r.failing,
      r.cumulativeFails,
    ]);
  }
}

/** One row per device: status, first failure, latest changes. */
function writeDevicesCsv(s: CsvSheet, d: LotDetail) {
  s.blank();
  s.row([
    'Serial',
    'Socket',
    'Status',
    'First failed (h)',
    'Failed parameters',
    'Latest read point (h)',
    'hFE change %',
    'ICBO ratio',
    'VCE(sat) shift mV',
    'hFE referred to reference temperature',
    'Late reading',
  ]);
  for (const x of d.devices) {
    s.row([
      x.serial,
      x.socketIndex,
      x.status,
      x.firstFailedH,
      x.failedParameters.map((p) => PARAM[p]).join(' '),
      x.latestH,
      x.hfeChangePct,
      x.icboRatio,
      x.vcesatShiftMv,
      x.hfeNormalised,
      x.late,
    ]);
  }
}

const deviationLabels = (v: LotReadingVersion) => v.deviation.map((k) => RECORD_DEVIATION_LABEL[k]).join('; ');

/** Every version of each corrected reading (the earlier values stay in the record), then the deviations. */
function writeRecordsCsv(s: CsvSheet, d: LotDetail) {
  s.blank();
  s.row(['Corrected readings: every version (the current one marked)']);
  s.row([
    'Run',
    'Serial',
    'Read point (h)',
    'Version',
    'Current',
    'Result',
    'hFE',
    'ICBO (A)',
    'VCE(sat) (V)',
    'Measured at',
    'Entered by',
    'Recorded at',
    'Reason',
    'Deviation',
  ]);
  if (!d.records.corrections.length) s.row(['none']);
  for (const v of d.records.corrections) {
    s.row([
      v.runCode,
      v.serial,
      v.readPointH,
      v.version,
      v.current,
      v.result,
      v.hfe,
      v.icboA,
      v.vcesatV,
      formatUtc(new Date(v.measuredAt)),
      v.enteredByName,
      formatUtc(new Date(v.recordedAt)),
      v.reason,
      deviationLabels(v),
    ]);
  }
  s.blank();
  s.row(['Record deviations', d.records.deviations.length]);
  for (const v of d.records.deviations) {
    s.row([v.runCode, v.serial, v.readPointH, v.version, deviationLabels(v), v.reason, v.enteredByName, formatUtc(new Date(v.recordedAt))]);
  }
}

/** The report blocks' tables: samples per plan, devices with dispositions, FIT, equipment, deviations, signatures. */
function writeReportBlocksCsv(s: CsvSheet, r: LotReportData) {
  const block = (title: string, header: Cell[], rows: Cell[][]) => s.block(title, header, rows);
  block(
    'Samples per plan',
    [
      'Plan',
      'Runs',
      'Verdict',
      'Planned',
      'Booked',
      'Judged',
      'Removed',
      'Failures',
      'Accept number',
      'Confidence',
      'Plan LTPD',
      'Demonstrated LTPD',
    ],
    r.plans.map((p) => [
      p.planName,
      p.runs.join(' + '),
      LOT_VERDICT_LABEL[p.verdict],
      p.planned,
      p.booked,
      p.judged,
      p.removed,
      p.failures,
      p.acceptNumber,
      p.confidence,
      p.planLtpd,
      p.demonstratedLtpd,
    ]),
  );
  block(
    'Devices counted by the verdict',
    ['Serial', 'Run', 'Rig', 'Socket', 'Status', 'Failed at (h)', 'Why', 'Disposition'],
    r.devices.map((x) => [x.serial, x.runCode, x.rigCode, x.socketIndex, x.status, x.failedAtH, x.failedBecause, x.disposition]),
  );
  block(
    'Failure rate per mechanism',
    [
      'Plan',
      'Mechanism',
      'Failures',
      'Devices',
      'Device-hours',
      'Acceleration factor',
      'Equivalent device-hours',
      'FIT 60 %',
      'FIT 90 %',
      'Method',
      'Unavailable',
    ],
    r.reliability.map((x) => [
      x.planName,
      x.mechanism,
      x.failures,
      x.devices,
      x.deviceHours,
      x.accelerationFactor,
      x.equivalentDeviceHours,
      x.fit60,
      x.fit90,
      x.method,
      x.unavailable,
    ]),
  );
  block(
    'Equipment',
    ['Run', 'State', 'Rig', 'Rig name', 'Sockets', 'Started', 'Finished', 'Calibrated', 'Calibration due', 'Interlocks tested'],
    r.equipment.map((e) => [
      e.runCode,
      e.runState,
      e.rigCode,
      e.rigName,
      e.sockets,
      e.startedAt,
      e.finishedAt,
      e.calibrationDoneAt,
      e.calibrationDueAt,
      e.interlockTestedAt,
    ]),
  );
  block(
    'Deviations, dispositions and trips',
    ['Kind', 'What'],
    r.deviations.map((x) => [x.kind, x.text]),
  );
  block(
    'Signatures',
    ['Name', 'E-mail', 'Meaning', 'Verdict signed', 'Signed at', 'SHA-256 signed', 'Still covers the verdict'],
    r.signatures.map((s) => [s.name, s.email, s.meaning, s.verdict, s.signedAt, s.dataHash, !s.stale]),
  );
  s.row(['SHA-256 of the judged evidence now', r.evidenceHash]);
}

/** The lot report PDF: a title, the lot section (every block), the drift table and the caution. */
export async function lotReportPdf(r: LotReportData): Promise<Buffer> {
  const { doc, done } = newPdf({ title: `Lot ${r.lot.code} report`, subject: `${r.lot.partNumber} lot ${r.lot.code}` });
  doc.font(FONT.bold).fontSize(18);
  para(doc, `Lot ${r.lot.code} - reliability report`);
  doc.font(FONT.regular).fontSize(9).fillColor(MUTED);
  para(
    doc,
    `${r.lot.partNumber}. Generated ${formatUtc(r.generatedAt)} by Emberlot.${r.run ? ` Drift from run ${r.run.code} (${r.run.state}).` : ''}`,
  );
  doc.fillColor('#000000');
  writeLotSection(doc, r);
  writeDriftTablePdf(doc, r.detail);
  heading(doc, 'Caution', 40);
  doc.font(FONT.regular).fontSize(9).fillColor(CAUTION_INK);
  para(doc, r.caution);
  footers(doc, `Emberlot - lot ${r.lot.code} - generated ${formatUtc(r.generatedAt)}`);
  doc.end();
  return done;
}

function writeDriftTablePdf(doc: PDFKit.PDFDocument, d: LotDetail) {
  if (!d.readPoints.length) return;
  heading(doc, 'Drift per read point (lot statistics)', 60);
  const fmt3 = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? '-' : String(+v.toPrecision(3)));
  const cols = ['Hours', 'Devices', 'Late', 'hFE mean %', 'hFE p5', 'hFE p95', 'ICBO x med', 'ICBO x p95', 'VCEsat mV', 'Cum. fails'];
  const widths = [44, 44, 32, 56, 48, 48, 56, 56, 56, 52];
  const row = (cells: string[], bold = false) => {
    if (doc.y + 13 > doc.page.height - doc.page.margins.bottom) doc.addPage();
    const y = doc.y;
    let x = doc.page.margins.left;
    doc.font(bold ? FONT.bold : FONT.regular).fontSize(8);
    cells.forEach((c, i) => {
      doc.text(pdfText(c), x, y, { width: widths[i] - 4, lineBreak: false });
      x += widths[i];
    });
    doc.x = doc.page.margins.left;
    doc.y = y + 12;
  };
  row(cols, true);
  for (const p of d.readPoints)
    row([
      fmt3(p.hours),
      String(p.devicesMeasured),
      String(p.late),
      fmt3(p.hfeChangePct?.mean),
      fmt3(p.hfeChangePct?.p5),
      fmt3(p.hfeChangePct?.p95),
      fmt3(p.icboRatio?.median),
      fmt3(p.icboRatio?.p95),
      fmt3(p.vcesatShiftMv?.mean),
      String(p.cumulativeFails),
    ]);
}
