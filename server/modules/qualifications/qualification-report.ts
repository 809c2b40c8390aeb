/**
 * The qualification report: PDF (pdfkit) and CSV of the same data — the matrix, per cell the
 * conditions, sample, results and verdict, drift charts, failed and removed devices with their
 * dispositions, deviations and waivers, the equipment used, the reliability figures with their
 * method, and the lot-verdict signatures. Every number comes from the qualification's matrix and
 * the lot views (GET /api/analytics/lots/:id), so the report and the screens cannot disagree.
 */
import PDFDocument from 'pdfkit';
import { formatUtc } from '../../../shared/domain/format';
import { LOT_VERDICT_LABEL, type LotDetail } from '../../../shared/schemas/analytics';
import type { LotSignoff } from '../../../shared/schemas/signoff';
import type { QualCellView } from '../../../shared/schemas/qualifications';
import { CELL_STATE_LABEL, QUAL_STATUS_LABEL, basisWords, type QualGroup } from '../../../shared/qualification/templates';
import { csvLine, pdfText as lotPdfText, type Cell } from '../analytics/lot-report';
import { cellJudgement, type QualificationReportData } from './qualifications.service';

/** The standard PDF fonts cover WinAnsi only: quotes, dashes and Δ spelled out before the lot report's own mapping. */
const pdfText = (s: string) => lotPdfText(s.replace(/[’‘]/g, "'").replace(/[“”]/g, '"').replace(/[—–]/g, '-').replace(/Δ/g, 'delta '));

const fmt = (v: number | null | undefined, digits = 3) =>
  v === null || v === undefined || !Number.isFinite(v) ? '-' : String(+v.toPrecision(digits));
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

interface Equipment {
  code: string;
  name: string;
  calibrationDue: string;
  interlockTested: string;
  runs: string[];
}

function equipment(data: QualificationReportData): Equipment[] {
  const cellRunIds = new Set(data.detail.cells.flatMap((c) => c.runs.map((r) => r.id)));
  const byRig = new Map<string, Equipment>();
  for (const r of data.runs) {
    if (!r.rig_id || !cellRunIds.has(r.id)) continue;
    const e = byRig.get(r.rig_id) ?? {
      code: r.rig_code ?? '',
      name: r.rig_name ?? '',
      calibrationDue: r.calibration_due_at ? formatUtc(r.calibration_due_at) : 'not recorded',
      interlockTested: r.interlock_tested_at ? formatUtc(r.interlock_tested_at) : 'not recorded',
      runs: [],
    };
    if (!e.runs.includes(r.code)) e.runs.push(r.code);
    byRig.set(r.rig_id, e);
  }
  return [...byRig.values()].sort((a, b) => a.code.localeCompare(b.code));
}

interface DeviceLine {
  lot: string;
  group: string;
  serial: string;
  socket: number;
  status: string;
  atH: number | null;
  why: string;
}

/** Failed and removed devices of every cell, with why (the failure words or the disposition). */
function deviceLines(data: QualificationReportData): DeviceLine[] {
  const groups = new Map(data.detail.groups.map((g) => [g.key, g]));
  const out: DeviceLine[] = [];
  for (const c of data.detail.cells) {
    const p = cellJudgement(data.lots.get(c.lotId)?.plans, c.planKind);
    if (!p) continue;
    for (const d of p.devices) {
      if (d.status === 'fail')
        out.push({
          lot: c.lotCode,
          group: groups.get(c.groupKey)!.name,
          serial: d.serial,
          socket: d.socketIndex,
          status: 'failed',
          atH: d.failedAtH,
          why: d.failedBecause.join('; '),
        });
      else if (d.status === 'removed')
        out.push({
          lot: c.lotCode,
          group: groups.get(c.groupKey)!.name,
          serial: d.serial,
          socket: d.socketIndex,
          status: 'removed',
          atH: d.removedAtH,
          why: d.removedBecause ?? '',
        });
    }
  }
  return out;
}

/** Deviations: sample deviations of the cells' plans and the lots' recorded reading deviations. */
function deviations(data: QualificationReportData): string[] {
  const out: string[] = [];
  for (const c of data.detail.cells) {
    const p = cellJudgement(data.lots.get(c.lotId)?.plans, c.planKind);
    const dev = p?.sample.deviation;
    if (dev) out.push(`${c.lotCode}, ${p!.planName}: booked ${dev.sampleSize} devices — ${dev.reason} (${dev.by}, ${dev.at})`);
  }
  for (const [, lot] of data.lots)
    for (const v of lot.records.deviations)
      out.push(`${lot.lotCode}, run ${v.runCode}, ${v.serial} at ${v.readPointH} h: ${v.reason ?? 'no reason given'}`);
  return out;
}

function signatureLines(signoffs: LotSignoff[], lots: Map<string, LotDetail>): string[] {
  return signoffs.flatMap((s) =>
    s.signatures.map(
      (g) =>
        `${lots.get(s.lotId)?.lotCode ?? s.lotId}: ${g.meaning} by ${g.signer.name} (${g.signer.email}) at ${formatUtc(new Date(g.signedAt))} — verdict ${LOT_VERDICT_LABEL[g.verdict]}${g.stale ? ' (the data changed since: needs a new signature)' : ''}; SHA-256 ${g.dataHash.slice(0, 16)}…`,
    ),
  );
}

// ---------------------------------------------------------------------------------------------
// CSV
// ---------------------------------------------------------------------------------------------

export function qualificationReportCsv(data: QualificationReportData, signoffs: LotSignoff[], generatedAt: Date): string {
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
  lines.push(
    csvLine([
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
    ]),
  );
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
  lines.push(csvLine(['Lot', 'Group', 'Device', 'Socket', 'Status', 'At (h)', 'Why']));
  for (const x of deviceLines(data)) lines.push(csvLine([x.lot, x.group, x.serial, x.socket, x.status, x.atH, x.why]));
  lines.push('');
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
  }
  for (const x of deviations(data)) kv('Deviation', x);
  lines.push('');
  lines.push(csvLine(['Rig', 'Name', 'Calibration due', 'Interlocks tested', 'Runs']));
  for (const e of equipment(data)) lines.push(csvLine([e.code, e.name, e.calibrationDue, e.interlockTested, e.runs.join('; ')]));
  lines.push('');
  for (const s of signatureLines(signoffs, data.lots)) kv('Signature', s);
  return lines.join('\r\n') + '\r\n';
}

const groupName = (groups: QualGroup[], c: QualCellView) => groups.find((g) => g.key === c.groupKey)?.name ?? c.groupKey;

// ---------------------------------------------------------------------------------------------
// PDF
// ---------------------------------------------------------------------------------------------

type Pdf = PDFKit.PDFDocument;
type Write = (s: string, opts?: PDFKit.Mixins.TextOptions) => Pdf;

const STATE_FILL: Record<string, string> = {
  Passed: '#d8efd9',
  Failed: '#f6d4d1',
  Waived: '#e6e0f2',
  'Under stress': '#fbe8c8',
  Booked: '#e2ecf7',
  'Awaiting verdict': '#f3efc8',
  'Not started': '#eeeeee',
};

function heading(doc: Pdf, t: Write, s: string) {
  if (doc.y > doc.page.height - 140) doc.addPage();
  doc.moveDown(0.8).font('Helvetica-Bold').fontSize(12).fillColor('#000000');
  t(s);
  doc.font('Helvetica').fontSize(9.5);
}

function writeMatrix(doc: Pdf, data: QualificationReportData) {
  const d = data.detail;
  const left = doc.page.margins.left;
  const width = doc.page.width - left - doc.page.margins.right;
  const groupW = 150;
  const colW = Math.min(110, (width - groupW) / Math.max(1, d.lots.length));
  const rowH = 30;
  const byKey = new Map(d.cells.map((c) => [`${c.groupKey}|${c.lotId}`, c]));
  const order = [...new Set(d.cells.map((c) => c.groupKey)), ...d.groups.map((g) => g.key)].filter((k, i, a) => a.indexOf(k) === i);
  let y = doc.y + 4;
  doc.font('Helvetica-Bold').fontSize(8.5);
  doc.text('Stress group', left + 2, y, { width: groupW - 4, lineBreak: false });
  d.lots.forEach((l, i) => doc.text(pdfText(`Lot ${l.code}`), left + groupW + i * colW + 2, y, { width: colW - 4, lineBreak: false }));
  y += 14;
  for (const key of order) {
    if (y + rowH > doc.page.height - doc.page.margins.bottom) {
      doc.addPage();
      y = doc.page.margins.top;
    }
    const g = d.groups.find((x) => x.key === key)!;
    doc.font('Helvetica').fontSize(8).fillColor('#000000');
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
        .rect(x, y, colW - 2, rowH - 2)
        .strokeColor('#999999')
        .lineWidth(0.5)
        .stroke();
      doc.fillColor('#000000').fontSize(8);
      if (c) {
        doc.font('Helvetica-Bold').text(pdfText(label), x + 3, y + 3, { width: colW - 8, lineBreak: false });
        const sample = c.sample
          ? `${c.sample.failures} fail / ${c.sample.judged} of ${c.plannedSample}`
          : `n ${c.plannedSample}, c ${c.acceptNumber}`;
        doc.font('Helvetica').text(pdfText(sample), x + 3, y + 15, { width: colW - 8, lineBreak: false });
      } else
        doc
          .font('Helvetica')
          .fillColor('#888888')
          .text('not asked', x + 3, y + 9, { width: colW - 8, lineBreak: false });
    });
    y += rowH;
  }
  doc.x = left;
  doc.y = y + 4;
  doc.fillColor('#000000');
}

/** Mean hFE change against stress hours for one cell's lot view: a small line chart drawn with vectors. */
function writeDriftChart(doc: Pdf, t: Write, title: string, lot: LotDetail) {
  const pts = lot.hfeTrend;
  if (pts.length < 2) return;
  if (doc.y > doc.page.height - 190) doc.addPage();
  doc.font('Helvetica-Bold').fontSize(9.5);
  t(title);
  const left = doc.page.margins.left + 36;
  const top = doc.y + 4;
  const w = 300;
  const h = 110;
  const limit = lot.hfeLimitPct ?? 15;
  const maxH = Math.max(...pts.map((p) => p.hours), 1);
  const span = Math.max(limit, ...pts.map((p) => Math.abs(p.value))) * 1.1;
  const xOf = (hours: number) => left + (hours / maxH) * w;
  const yOf = (v: number) => top + h / 2 - (v / span) * (h / 2);
  doc.save().lineWidth(0.5).strokeColor('#777777').rect(left, top, w, h).stroke();
  doc
    .moveTo(left, yOf(0))
    .lineTo(left + w, yOf(0))
    .strokeColor('#bbbbbb')
    .stroke();
  doc.dash(3, { space: 3 }).strokeColor('#c0392b');
  doc
    .moveTo(left, yOf(limit))
    .lineTo(left + w, yOf(limit))
    .stroke();
  doc
    .moveTo(left, yOf(-limit))
    .lineTo(left + w, yOf(-limit))
    .stroke();
  doc.undash().lineWidth(1.2).strokeColor('#1f5f8b');
  pts.forEach((p, i) => (i === 0 ? doc.moveTo(xOf(p.hours), yOf(p.value)) : doc.lineTo(xOf(p.hours), yOf(p.value))));
  doc.stroke();
  for (const p of pts) doc.circle(xOf(p.hours), yOf(p.value), 1.8).fillColor('#1f5f8b').fill();
  doc.restore();
  doc.font('Helvetica').fontSize(7).fillColor('#333333');
  doc.text(`+${fmt(span, 2)} %`, left - 34, top - 3, { width: 32, align: 'right' });
  doc.text('0 %', left - 34, yOf(0) - 3, { width: 32, align: 'right' });
  doc.text(`-${fmt(span, 2)} %`, left - 34, top + h - 6, { width: 32, align: 'right' });
  doc.text('0 h', left - 4, top + h + 2);
  doc.text(`${fmt(maxH, 5)} h`, left + w - 40, top + h + 2, { width: 40, align: 'right' });
  doc.text(pdfText(`mean hFE change, % (dashed: ±${limit} % limit)`), left + 60, top + h + 2);
  doc.fillColor('#000000');
  doc.x = doc.page.margins.left;
  doc.y = top + h + 16;
}

function writeCells(doc: Pdf, t: Write, data: QualificationReportData) {
  heading(doc, t, 'Cells: conditions, sample, results and verdict');
  for (const r of reportCellRows(data)) {
    if (doc.y > doc.page.height - 110) doc.addPage();
    doc.font('Helvetica-Bold').fontSize(9.5);
    t(`${r.group} - lot ${r.lot}: ${r.state}${r.verdict ? ` (verdict ${r.verdict})` : ''}`);
    doc.font('Helvetica').fontSize(8.5);
    t(`${r.method}; ${r.conditions}. Planned ${r.plannedSample}, accept ${r.acceptNumber}.`, { indent: 8 });
    if (r.booked !== null) t(`Booked ${r.booked}, judged ${r.judged}, failures ${r.failures}.`, { indent: 8 });
    if (r.fit60 !== null) t(`FIT ${fmt(r.fit60, 4)} at 60 %, ${fmt(r.fit90, 4)} at 90 % - ${r.fitMethod}.`, { indent: 8 });
    if (r.runs) t(`Runs: ${r.runs}.`, { indent: 8 });
    doc.fillColor('#555555');
    t(`Source: ${r.basis}`, { indent: 8 });
    doc.fillColor('#000000');
  }
}

export function qualificationReportPdf(data: QualificationReportData, signoffs: LotSignoff[], generatedAt: Date): Promise<Buffer> {
  const d = data.detail;
  return new Promise((resolve, reject) => {
    const doc = new PDFDocument({ size: 'A4', margin: 44, info: { Title: `Qualification ${d.code} report`, Author: 'Emberlot' } });
    const chunks: Buffer[] = [];
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
    const t: Write = (s, opts) => doc.text(pdfText(s), opts);

    doc.font('Helvetica-Bold').fontSize(17);
    t(`Qualification ${d.code} - ${d.name}`);
    doc.font('Helvetica').fontSize(9).fillColor('#555555');
    t(`Generated ${formatUtc(generatedAt)} by Emberlot`);
    doc.fillColor('#000000').fontSize(9.5).moveDown(0.6);
    t(`Template: ${d.templateName} (${d.standard}). Status: ${QUAL_STATUS_LABEL[d.status]}, ${d.cellsDone} of ${d.cellsTotal} cells done.`);
    t(`Device types: ${d.deviceTypes.map((x) => x.partNumber).join(', ')}. Lots: ${d.lots.map((l) => l.code).join(', ')}.`);
    if (d.familyRule) t(`Generic-data rule (family): ${d.familyRule}`);
    t(`Order of tests: ${d.sequence} ${basisWords(d.sequenceBasis)}`);
    t(`Projected finish: ${d.projectedFinish ? when(d.projectedFinish) : 'none'}${d.projectionNote ? ` - ${d.projectionNote}` : ''}`);

    heading(doc, t, 'Matrix');
    writeMatrix(doc, data);
    if (d.left.length) {
      doc.font('Helvetica').fontSize(8.5);
      t(`Left to do: ${d.left.join(' ')}`);
    }

    writeCells(doc, t, data);

    heading(doc, t, 'Drift');
    const charted = new Set<string>();
    for (const c of d.cells) {
      const lot = data.lots.get(c.lotId);
      if (!lot || !c.planKind || charted.has(c.lotId) || !c.runs.length) continue;
      charted.add(c.lotId);
      writeDriftChart(doc, t, `Lot ${lot.lotCode} (${lot.plan?.name ?? ''}): mean hFE change from time zero`, lot);
    }
    if (!charted.size) t('No lot has readings after time zero yet.');

    heading(doc, t, 'Failed and removed devices');
    const devs = deviceLines(data);
    if (!devs.length) t('None.');
    for (const x of devs) t(`${x.lot}, ${x.group}: ${x.serial} (socket ${x.socket}) ${x.status} at ${fmt(x.atH, 5)} h - ${x.why}`);

    heading(doc, t, 'Deviations and waivers');
    const waivers = d.cells.filter((c) => c.waiver);
    const devLines = deviations(data);
    if (!waivers.length && !devLines.length) t('None.');
    for (const c of waivers)
      t(
        `Waived: ${groupName(d.groups, c)} on lot ${c.lotCode} by ${c.waiver!.by} at ${formatUtc(new Date(c.waiver!.at))} - ${c.waiver!.reason}`,
      );
    for (const x of devLines) t(`Deviation: ${x}`);
    for (const c of d.cells.filter((x) => x.external))
      t(
        `Outside result: ${groupName(d.groups, c)} on lot ${c.lotCode}: ${c.external!.result} - ${c.external!.by}, ${formatUtc(new Date(c.external!.at))}, document ${c.external!.document} (recorded by ${c.external!.recordedBy})`,
      );

    heading(doc, t, 'Equipment used');
    const eq = equipment(data);
    if (!eq.length) t('No rig has run a cell yet.');
    for (const e of eq)
      t(`${e.code} ${e.name}: calibration due ${e.calibrationDue}; interlocks last tested ${e.interlockTested}; runs ${e.runs.join(', ')}`);

    heading(doc, t, 'Reliability figures');
    const fits = d.cells.filter((c) => c.fit);
    if (!fits.length) t('No failure rate yet (no read point after time zero).');
    for (const c of fits)
      t(
        `${groupName(d.groups, c)}, lot ${c.lotCode}: FIT ${fmt(c.fit!.fit60, 4)} at 60 %, ${fmt(c.fit!.fit90, 4)} at 90 % confidence - ${c.fit!.mechanismLabel}; ${c.fit!.method}`,
      );

    heading(doc, t, 'Signatures');
    const sigs = signatureLines(signoffs, data.lots);
    if (!sigs.length) t('No lot verdict has been signed yet.');
    for (const s of sigs) t(s);

    doc.moveDown(1).font('Helvetica-Oblique').fontSize(8.5).fillColor('#7a4b00');
    t(
      'Caution: the stresses behind this report ran at high voltage and in hot ovens. Protection software is no substitute for the rigs’ hardware interlocks; follow the lab’s safety rules and local codes.',
    );
    doc.end();
  });
}
