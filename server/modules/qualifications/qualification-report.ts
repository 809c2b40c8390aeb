/**
 * The qualification report: PDF and CSV of the same data — the matrix, per cell the conditions,
 * sample, results and verdict, what is left, waivers and outside results, then each lot in full
 * through the lot report's own section (server/modules/reports/blocks.ts: drift charts, devices
 * with failures and dispositions, FIT per mechanism, equipment, deviations, signatures). Every
 * number comes from the qualification's matrix and the lot views (GET /api/analytics/lots/:id),
 * so the report and the screens cannot disagree.
 */
import { formatUtc } from '../../../shared/domain/format';
import { LOT_VERDICT_LABEL } from '../../../shared/schemas/analytics';
import type { QualCellView } from '../../../shared/schemas/qualifications';
import { CELL_STATE_LABEL, QUAL_STATUS_LABEL, basisWords, type QualGroup } from '../../../shared/qualification/templates';
import { WITHDRAWN_RECORD_LABEL } from '../../../shared/qualification/words';
import { writeLotSection } from '../reports/blocks';
import { csvLine, type Cell } from '../reports/csv';
import {
  FONT,
  INK,
  MUTED,
  CAUTION_INK,
  contentWidth,
  field,
  fmt,
  footers,
  heading,
  keepTogether,
  newPdf,
  pageBottom,
  para,
  pdfText,
  table,
  type Pdf,
} from '../reports/pdf-doc';
import type { LotReportData } from '../reports/report-data';
import type { QualificationReportData } from './qualifications.service';

const when = (iso: string | null) => (iso ? formatUtc(new Date(iso)) : '-');

/** The report's rows for one cell (shared by the PDF, the CSV and the test that compares them with the lot views). */
export interface ReportCellRow {
  group: string;
  lot: string;
  kind: string;
  method: string;
  conditions: string;
  plannedSample: number;
  acceptNumber: number;
  booked: number | null;
  judged: number | null;
  failures: number | null;
  verdict: string;
  state: string;
  fit60: number | null;
  fit90: number | null;
  fitMethod: string;
  runs: string;
  basis: string;
}

export function reportCellRows(data: QualificationReportData): ReportCellRow[] {
  const groups = new Map(data.detail.groups.map((g) => [g.key, g]));
  return data.detail.cells.map((c) => {
    const g = groups.get(c.groupKey)!;
    return {
      group: g.name,
      lot: c.lotCode,
      kind: c.planKind ?? 'outside result',
      method: g.method,
      conditions: g.conditions,
      plannedSample: c.plannedSample,
      acceptNumber: c.acceptNumber,
      booked: c.sample?.booked ?? null,
      judged: c.sample?.judged ?? null,
      failures: c.sample?.failures ?? null,
      verdict: c.verdict
        ? LOT_VERDICT_LABEL[c.verdict]
        : c.external
          ? c.external.result === 'pass'
            ? 'Pass (outside)'
            : 'Fail (outside)'
          : '',
      state: CELL_STATE_LABEL[c.state],
      fit60: c.fit?.fit60 ?? null,
      fit90: c.fit?.fit90 ?? null,
      fitMethod: c.fit ? `${c.fit.mechanismLabel}: ${c.fit.method}` : '',
      runs: c.runs.map((r) => `${r.code} (${r.rigCode ?? 'no rig'}, ${r.state}, ${fmt(r.stressHours, 5)} h)`).join('; '),
      basis: `${g.source}. ${basisWords(g.basis)}`,
    };
  });
}

const groupName = (groups: QualGroup[], c: QualCellView) => groups.find((g) => g.key === c.groupKey)?.name ?? c.groupKey;

// ---------------------------------------------------------------------------------------------
// CSV
// ---------------------------------------------------------------------------------------------

const CELL_COLUMNS = [
  'Group',
  'Lot',
  'Plan kind',
  'Method',
  'Conditions',
  'Planned sample',
  'Accept number',
  'Booked',
  'Judged',
  'Failures',
  'Verdict',
  'State',
  'FIT 60 %',
  'FIT 90 %',
  'FIT method',
  'Runs',
  'Source',
];

export function qualificationReportCsv(data: QualificationReportData, lots: readonly LotReportData[], generatedAt: Date): string {
  const d = data.detail;
  const lines: string[] = [];
  const kv = (k: string, ...v: Cell[]) => lines.push(csvLine([k, ...v]));
  kv('Emberlot qualification report', `Generated ${formatUtc(generatedAt)}`);
  kv('Qualification', d.code, d.name);
  kv('Template', d.templateName, d.standard);
  kv('Device types', d.deviceTypes.map((t) => t.partNumber).join('; '));
  kv('Lots', d.lots.map((l) => l.code).join('; '));
  if (d.familyRule) kv('Generic-data rule', d.familyRule);
  kv('Status', QUAL_STATUS_LABEL[d.status]);
  kv('Projected finish', d.projectedFinish ? when(d.projectedFinish) : 'none', d.projectionNote ?? '');
  kv('Order of tests', d.sequence, basisWords(d.sequenceBasis));
  lines.push('');
  lines.push(csvLine(CELL_COLUMNS));
  for (const r of reportCellRows(data))
    lines.push(
      csvLine([
        r.group,
        r.lot,
        r.kind,
        r.method,
        r.conditions,
        r.plannedSample,
        r.acceptNumber,
        r.booked,
        r.judged,
        r.failures,
        r.verdict,
        r.state,
        r.fit60,
        r.fit90,
        r.fitMethod,
        r.runs,
        r.basis,
      ]),
    );
  lines.push('');
  for (const l of d.left) kv('Left to do', l);
  for (const c of d.cells) {
    if (c.waiver) kv('Waiver', groupName(d.groups, c), c.lotCode, c.waiver.reason, c.waiver.by, formatUtc(new Date(c.waiver.at)));
    if (c.external)
      kv(
        'Outside result',
        groupName(d.groups, c),
        c.lotCode,
        c.external.result,
        c.external.by,
        formatUtc(new Date(c.external.at)),
        c.external.document,
      );
    for (const w of c.withdrawn)
      kv(
        'Withdrawn',
        WITHDRAWN_RECORD_LABEL[w.record],
        groupName(d.groups, c),
        c.lotCode,
        w.text,
        w.recordedBy,
        w.reason,
        w.by,
        formatUtc(new Date(w.at)),
      );
  }
  lines.push('');
  lines.push(csvLine(['Lot', 'Device', 'Run', 'Rig', 'Socket', 'Status', 'Failed at (h)', 'Why', 'Disposition']));
  for (const l of lots)
    for (const x of l.devices.filter((x) => x.status === 'fail' || x.status === 'removed' || x.disposition))
      lines.push(
        csvLine([l.lot.code, x.serial, x.runCode, x.rigCode, x.socketIndex, x.status, x.failedAtH, x.failedBecause, x.disposition]),
      );
  lines.push('');
  lines.push(csvLine(['Lot', 'Deviation kind', 'What']));
  for (const l of lots) for (const x of l.deviations) lines.push(csvLine([l.lot.code, x.kind, x.text]));
  lines.push('');
  lines.push(csvLine(['Lot', 'Run', 'Rig', 'Rig name', 'Sockets', 'Calibrated', 'Calibration due', 'Interlocks tested']));
  for (const l of lots)
    for (const e of l.equipment)
      lines.push(
        csvLine([l.lot.code, e.runCode, e.rigCode, e.rigName, e.sockets, e.calibrationDoneAt, e.calibrationDueAt, e.interlockTestedAt]),
      );
  lines.push('');
  lines.push(
    csvLine(['Lot', 'Plan', 'Mechanism', 'Failures', 'Devices', 'Device-hours', 'Acceleration factor', 'FIT 60 %', 'FIT 90 %', 'Method']),
  );
  for (const l of lots)
    for (const f of l.reliability)
      lines.push(
        csvLine([
          l.lot.code,
          f.planName,
          f.mechanism,
          f.failures,
          f.devices,
          f.deviceHours,
          f.accelerationFactor,
          f.fit60,
          f.fit90,
          f.unavailable ?? f.method,
        ]),
      );
  lines.push('');
  lines.push(csvLine(['Lot', 'Signed by', 'E-mail', 'Meaning', 'Verdict', 'Signed at', 'SHA-256', 'Stale']));
  for (const l of lots)
    for (const g of l.signatures) lines.push(csvLine([l.lot.code, g.name, g.email, g.meaning, g.verdict, g.signedAt, g.dataHash, g.stale]));
  return lines.join('\r\n') + '\r\n';
}

// ---------------------------------------------------------------------------------------------
// PDF
// ---------------------------------------------------------------------------------------------

const STATE_FILL: Record<string, string> = {
  Passed: '#d8efd9',
  Failed: '#f6d4d1',
  Waived: '#e6e0f2',
  'Under stress': '#fbe8c8',
  Booked: '#e2ecf7',
  'Awaiting verdict': '#f3efc8',
  'Not started': '#eeeeee',
};

/** The matrix: stress groups down, lots across, each cell its state and sample. */
function writeMatrix(doc: Pdf, data: QualificationReportData) {
  const d = data.detail;
  const left = doc.page.margins.left;
  const groupW = 150;
  const colW = Math.min(110, (contentWidth(doc) - groupW) / Math.max(1, d.lots.length));
  const rowH = 30;
  const byKey = new Map(d.cells.map((c) => [`${c.groupKey}|${c.lotId}`, c]));
  const order = [...new Set(d.cells.map((c) => c.groupKey))];
  keepTogether(doc, 14 + rowH * 3);
  let y = doc.y + 4;
  doc.font(FONT.bold).fontSize(8.5).fillColor(INK);
  doc.text('Stress group', left + 2, y, { width: groupW - 4, lineBreak: false });
  d.lots.forEach((l, i) => doc.text(pdfText(`Lot ${l.code}`), left + groupW + i * colW + 2, y, { width: colW - 4, lineBreak: false }));
  y += 14;
  for (const key of order) {
    if (y + rowH > pageBottom(doc)) {
      doc.addPage();
      y = doc.page.margins.top;
    }
    const g = d.groups.find((x) => x.key === key)!;
    doc.font(FONT.regular).fontSize(8).fillColor(INK);
    doc.text(pdfText(`${g.name}${g.preconditioned ? ' (PC first)' : ''}`), left + 2, y + 3, { width: groupW - 4, height: rowH - 4 });
    d.lots.forEach((l, i) => {
      const x = left + groupW + i * colW;
      const c = byKey.get(`${key}|${l.id}`);
      const label = c ? CELL_STATE_LABEL[c.state] : '';
      doc
        .save()
        .rect(x, y, colW - 2, rowH - 2)
        .fill(c ? (STATE_FILL[label] ?? '#ffffff') : '#ffffff')
        .restore();
      doc
        .save()
        .rect(x, y, colW - 2, rowH - 2)
        .strokeColor('#999999')
        .lineWidth(0.5)
        .stroke()
        .restore();
      doc.fillColor(INK).fontSize(8);
      if (c) {
        doc.font(FONT.bold).text(pdfText(label), x + 3, y + 3, { width: colW - 8, lineBreak: false });
        const sample = c.sample
          ? `${c.sample.failures} fail / ${c.sample.judged} of ${c.plannedSample}`
          : `n ${c.plannedSample}, c ${c.acceptNumber}`;
        doc.font(FONT.regular).text(pdfText(sample), x + 3, y + 15, { width: colW - 8, lineBreak: false });
      } else
        doc
          .font(FONT.regular)
          .fillColor(MUTED)
          .text('not asked', x + 3, y + 9, { width: colW - 8, lineBreak: false });
    });
    y += rowH;
  }
  doc.x = left;
  doc.y = y + 4;
  doc.font(FONT.regular).fontSize(9.5).fillColor(INK);
}

function writeCells(doc: Pdf, data: QualificationReportData) {
  heading(doc, 'Cells: conditions, sample, results and verdict', 80);
  const w = contentWidth(doc);
  table(
    doc,
    [
      { header: 'Group / lot', width: 0.2 * w },
      { header: 'Method and conditions', width: 0.25 * w },
      { header: 'Sample (planned, booked, judged, failed)', width: 0.15 * w },
      { header: 'State / verdict', width: 0.13 * w },
      { header: 'Runs', width: 0.27 * w },
    ],
    reportCellRows(data).map((r) => [
      `${r.group}\n${r.lot}`,
      `${r.method}; ${r.conditions}`,
      `${r.plannedSample} (c ${r.acceptNumber}), ${r.booked ?? '-'}, ${r.judged ?? '-'}, ${r.failures ?? '-'}`,
      `${r.state}${r.verdict ? ` / ${r.verdict}` : ''}`,
      r.runs || '-',
    ]),
    (i) => (data.detail.cells[i]?.state === 'failed' ? '#b3261e' : null),
  );
  doc.moveDown(0.4);
  doc.fontSize(8).fillColor(MUTED);
  const groups = data.detail.groups.filter((g) => data.detail.cells.some((c) => c.groupKey === g.key));
  for (const g of groups) para(doc, `${g.name}: ${g.source}. ${basisWords(g.basis)}`);
  doc.fontSize(9.5).fillColor(INK);
}

export async function qualificationReportPdf(
  data: QualificationReportData,
  lots: readonly LotReportData[],
  generatedAt: Date,
): Promise<Buffer> {
  const d = data.detail;
  const { doc, done } = newPdf({ title: `Qualification ${d.code} report`, subject: d.name });
  doc.font(FONT.bold).fontSize(17).fillColor(INK);
  para(doc, `Qualification ${d.code} - ${d.name}`);
  doc.font(FONT.regular).fontSize(9).fillColor(MUTED);
  para(doc, `Generated ${formatUtc(generatedAt)} by Emberlot`);
  doc.fillColor(INK).fontSize(9.5).moveDown(0.6);
  field(doc, 'Template', `${d.templateName} (${d.standard})`);
  field(doc, 'Status', `${QUAL_STATUS_LABEL[d.status]}: ${d.cellsDone} of ${d.cellsTotal} cells done`);
  field(doc, 'Device types', d.deviceTypes.map((x) => x.partNumber).join(', '));
  field(doc, 'Lots', d.lots.map((l) => l.code).join(', '));
  if (d.familyRule) field(doc, 'Generic-data rule', d.familyRule);
  field(doc, 'Order of tests', `${d.sequence} ${basisWords(d.sequenceBasis)}`);
  field(
    doc,
    'Projected finish',
    `${d.projectedFinish ? when(d.projectedFinish) : 'none'}${d.projectionNote ? ` - ${d.projectionNote}` : ''}`,
  );

  heading(doc, 'Matrix', 120);
  writeMatrix(doc, data);
  writeCells(doc, data);

  if (d.left.length) {
    heading(doc, `Left to do (${d.left.length})`, 40);
    doc.fontSize(8.5);
    for (const l of d.left) para(doc, `- ${l}`);
    doc.fontSize(9.5);
  }

  heading(doc, 'Waivers and outside results', 40);
  const waived = d.cells.filter((c) => c.waiver);
  const outside = d.cells.filter((c) => c.external);
  const withdrawn = d.cells.flatMap((c) => c.withdrawn.map((w) => ({ c, w })));
  if (!waived.length && !outside.length && !withdrawn.length) para(doc, 'None.');
  for (const c of waived)
    para(
      doc,
      `Waived: ${groupName(d.groups, c)} on lot ${c.lotCode} by ${c.waiver!.by}, ${formatUtc(new Date(c.waiver!.at))} - ${c.waiver!.reason}`,
    );
  for (const c of outside)
    para(
      doc,
      `Outside result: ${groupName(d.groups, c)} on lot ${c.lotCode}: ${c.external!.result} - ${c.external!.by}, ${formatUtc(new Date(c.external!.at))}, document ${c.external!.document} (recorded by ${c.external!.recordedBy})`,
    );

  for (const { c, w } of withdrawn)
    para(
      doc,
      `Withdrawn ${WITHDRAWN_RECORD_LABEL[w.record]}: ${groupName(d.groups, c)} on lot ${c.lotCode} (${w.text}; recorded by ${w.recordedBy}) - withdrawn by ${w.by}, ${formatUtc(new Date(w.at))}: ${w.reason}`,
    );

  for (const lot of lots) {
    doc.addPage();
    doc.font(FONT.bold).fontSize(14).fillColor(INK);
    para(doc, `Lot ${lot.lot.code}`);
    doc.font(FONT.regular).fontSize(9.5);
    writeLotSection(doc, lot);
  }
  if (!lots.length) {
    heading(doc, 'Lots', 30);
    para(doc, 'No lot of this qualification has a run yet.');
  }

  doc.moveDown(1).font(FONT.regular).fontSize(8.5).fillColor(CAUTION_INK);
  keepTogether(doc, 40);
  para(
    doc,
    'Caution: the stresses behind this report ran at high voltage and in hot ovens. Protection software is no substitute for the rigs’ hardware interlocks; follow the lab’s safety rules and local codes.',
  );
  footers(doc, `Emberlot qualification ${d.code}`);
  doc.end();
  return done;
}
