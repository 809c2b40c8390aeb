/**
 * Lot report exports: CSV for spreadsheets and a printable PDF (pdfkit).
 *
 * CSV injection: every text cell that starts with = + - @, a tab or a carriage return gets a
 * leading single quote, so a spreadsheet shows it as text instead of running it (OWASP CSV
 * injection guidance, common practice). Numbers we computed are written as plain numbers, so a
 * negative drift such as -2.5 stays a number.
 */
import { formatUtc } from '../../../shared/domain/format';
import PDFDocument from 'pdfkit';
import { LOT_VERDICT_LABEL, type LotDetail, type LotReadingVersion } from '../../../shared/schemas/analytics';
import { RECORD_DEVIATION_LABEL } from '../../../shared/domain/records';
import { describeParameters } from '../../../shared/reliability/mechanisms';

export type Cell = string | number | boolean | null | undefined;

const FORMULA_START = /^[=+\-@\t\r]/;

/** One CSV cell: neutralised if it could start a formula, quoted when it holds a separator or quote. */
export function csvCell(v: Cell): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(+v.toPrecision(8)) : '';
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  let s = String(v);
  if (FORMULA_START.test(s)) s = `'${s}`;
  return /[",\r\n;]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export const csvLine = (cells: Cell[]) => cells.map(csvCell).join(',');

const PARAM = { hfe: 'hFE', icbo: 'ICBO', vcesat: 'VCE(sat)' } as const;

export function lotReportCsv(d: LotDetail, extra: { notes: string; generatedAt: Date }): string {
  const lines: string[] = [];
  const kv = (k: string, v: Cell) => lines.push(csvLine([k, v]));
  kv('Emberlot lot drift report', `Generated ${formatUtc(extra.generatedAt)}`);
  kv('Lot', d.lotCode);
  kv('Device type', d.partNumber);
  kv('Date code', d.dateCode);
  kv('Lot notes', extra.notes);
  kv(
    'Plan',
    d.plan
      ? `${d.plan.name} (${d.plan.kind}, ${d.plan.chamberC} °C, ${d.plan.durationH} h, n ${d.plan.sampleSize}, accept ${d.plan.acceptNumber})`
      : 'none',
  );
  kv('Run', d.run ? `${d.run.code} (${d.run.state}, ${d.run.stressHours} h)` : 'none');
  kv('Verdict', LOT_VERDICT_LABEL[d.verdict]);
  for (const r of d.reasons) kv('Reason', r);
  for (const p of d.plans) {
    const s = p.sample;
    kv(`Plan verdict: ${p.planName}`, LOT_VERDICT_LABEL[p.verdict]);
    kv(
      `Sample: ${p.planName}`,
      `runs ${p.runs.map((r) => r.runCode).join(' + ')}; planned ${s.planned}, booked ${s.booked}, judged ${s.judged}, failures ${s.failures}; LTPD demonstrated ${s.demonstratedLtpd === null ? '—' : `${+(s.demonstratedLtpd * 100).toPrecision(3)} %`}, plan ${+(s.planLtpd * 100).toPrecision(3)} % at ${s.confidence * 100} %`,
    );
    if (s.deviation)
      kv(
        `Sample deviation: ${p.planName}`,
        `${s.deviation.sampleSize} devices: ${s.deviation.reason} (${s.deviation.by}, ${s.deviation.at})`,
      );
    for (const r of p.readPoints)
      if (r.due && !r.complete)
        kv(`Incomplete read point (h): ${p.planName}`, `${r.hours}: ${r.missing.map((m) => `${m.serial} (${m.why})`).join('; ')}`);
    kv(`Degradation: ${p.planName}`, p.degradation.note);
  }
  kv('Pseudo-failure time (h)', d.pseudoFailureH);
  kv('Pseudo-failure parameter', d.pseudoFailureParameter ? PARAM[d.pseudoFailureParameter] : '');
  if (d.fit) {
    kv('Failure mechanism', d.fit.mechanismLabel);
    kv('Model', d.fit.model);
    kv('Model parameters', describeParameters(d.fit.parameters));
    kv(
      'Junction over credited hours (°C)',
      d.fit.junction.tjMeanC === null
        ? ''
        : `mean ${+d.fit.junction.tjMeanC.toPrecision(4)}, ${+d.fit.junction.tjMinC!.toPrecision(4)} to ${+d.fit.junction.tjMaxC!.toPrecision(4)}`,
    );
    kv('Acceleration factor', d.fit.accelerationFactor);
    kv('Device-hours', d.fit.deviceHours);
    kv('Equivalent device-hours', d.fit.equivalentDeviceHours);
    kv('FIT upper bound 60 %', d.fit.fit60);
    kv('FIT upper bound 90 %', d.fit.fit90);
    kv(
      'Constants',
      `k ${d.fit.constants.boltzmannEvPerK} eV/K (${d.fit.constants.source}), Ea ${d.fit.constants.eaEv} eV, use ${d.fit.constants.useC} °C, stress ${+d.fit.constants.stressC.toPrecision(4)} °C (${d.fit.constants.stressBasis})`,
    );
  }
  for (const p of d.plans) {
    if (p.fit)
      kv(`FIT 60 % / 90 %: ${p.planName} (${p.fit.mechanismLabel})`, `${+p.fit.fit60.toPrecision(4)} / ${+p.fit.fit90.toPrecision(4)}`);
    else if (p.fitUnavailable) kv(`FIT: ${p.planName}`, p.fitUnavailable);
  }
  kv('Caution', d.caution);
  lines.push('');
  lines.push(
    csvLine([
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
    ]),
  );
  for (const r of d.readPoints) {
    lines.push(
      csvLine([
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
      ]),
    );
  }
  lines.push('');
  lines.push(
    csvLine([
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
    ]),
  );
  for (const x of d.devices) {
    lines.push(
      csvLine([
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
      ]),
    );
  }
  writeRecordsCsv(lines, d);
  return `\uFEFF${lines.join('\r\n')}\r\n`;
}

const deviationLabels = (v: LotReadingVersion) => v.deviation.map((k) => RECORD_DEVIATION_LABEL[k]).join('; ');

/** Every version of each corrected reading (the earlier values stay in the record), then the deviations. */
function writeRecordsCsv(lines: string[], d: LotDetail) {
  lines.push('');
  lines.push(csvLine(['Corrected readings: every version (the current one marked)']));
  lines.push(
    csvLine([
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
    ]),
  );
  if (!d.records.corrections.length) lines.push(csvLine(['none']));
  for (const v of d.records.corrections) {
    lines.push(
      csvLine([
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
      ]),
    );
  }
  lines.push('');
  lines.push(csvLine(['Record deviations', d.records.deviations.length]));
  for (const v of d.records.deviations) {
    lines.push(
      csvLine([
        v.runCode,
        v.serial,
        v.readPointH,
        v.version,
        deviationLabels(v),
        v.reason,
        v.enteredByName,
        formatUtc(new Date(v.recordedAt)),
      ]),
    );
  }
}

function writeRecordsPdf(doc: Pdf, t: Write, d: LotDetail) {
  const { corrections, deviations } = d.records;
  if (!corrections.length && !deviations.length) return;
  doc.moveDown(0.8).font('Helvetica-Bold').fontSize(12);
  t('Corrected readings and record deviations');
  doc.font('Helvetica').fontSize(9);
  for (const v of corrections) {
    t(
      `${v.runCode} ${v.serial} at ${v.readPointH} h, version ${v.version}${v.current ? ' (current)' : ' (superseded)'}: ${v.result === 'measured' ? `hFE ${fmt(v.hfe, 4)}, ICBO ${fmt(v.icboA, 3)} A, VCE(sat) ${fmt(v.vcesatV, 3)} V` : v.result}` +
        ` - by ${v.enteredByName ?? 'unknown'}, ${formatUtc(new Date(v.recordedAt))}${v.reason ? `; reason: ${v.reason}` : ''}`,
    );
  }
  for (const v of deviations) {
    t(
      `Deviation: ${deviationLabels(v)} - ${v.runCode} ${v.serial} at ${v.readPointH} h; reason: ${v.reason ?? ''} (${v.enteredByName ?? 'unknown'}, ${formatUtc(new Date(v.recordedAt))})`,
    );
  }
}

/** The standard PDF fonts cover WinAnsi only: spell out what they cannot draw. */
export function pdfText(s: string): string {
  return s
    .replace(/−/g, '-')
    .replace(/≤/g, '<=')
    .replace(/≥/g, '>=')
    .replace(/σ/g, 'sigma')
    .replace(/β/g, 'beta')
    .replace(/χ²/g, 'chi-square')
    .replace(/⁹/g, '^9')
    .replace(/→/g, '->')
    .replace(/…/g, '...')
    .replace(/[^\x20-\x7E\u00A0-\u00FF\n]/g, '?');
}

const fmt = (v: number | null | undefined, digits = 3) =>
  v === null || v === undefined || !Number.isFinite(v) ? '-' : String(+v.toPrecision(digits));

type Pdf = PDFKit.PDFDocument;
/** Writes one paragraph in the current font, spelled for the standard PDF fonts. */
type Write = (s: string, opts?: PDFKit.Mixins.TextOptions) => Pdf;

function writeHeading(doc: Pdf, t: Write, d: LotDetail, extra: { notes: string; generatedAt: Date }) {
  doc.font('Helvetica-Bold').fontSize(18);
  t(`Lot ${d.lotCode} - drift report`);
  doc.font('Helvetica').fontSize(9).fillColor('#555555');
  t(`Generated ${formatUtc(extra.generatedAt)} by Emberlot`);
  doc.moveDown(0.8).fillColor('#000000').fontSize(10);
  t(`Device type: ${d.partNumber}    Date code: ${d.dateCode || '-'}`);
  if (extra.notes) t(`Lot notes: ${extra.notes}`);
  t(
    d.plan
      ? `Plan: ${d.plan.name} (${d.plan.kind.toUpperCase()}, chamber ${d.plan.chamberC} °C, ${d.plan.durationH} h, n ${d.plan.sampleSize}, accept ${d.plan.acceptNumber})`
      : 'Plan: none',
  );
  t(d.run ? `Run: ${d.run.code}, ${d.run.state}, ${fmt(d.run.stressHours, 5)} stress hours` : 'Run: none');
  if (d.criteria) {
    t(
      `Criteria: hFE within ±${d.criteria.hfeChangePct} %; ICBO change <= max(${d.criteria.leakageMultiple - 1}× initial, ${fmt(d.criteria.leakageFloorA * 1e9)} nA); VCE(sat) shift <= ${fmt(d.criteria.vcesatShiftV * 1000)} mV`,
    );
  }
}

function writeVerdict(doc: Pdf, t: Write, d: LotDetail) {
  doc.moveDown(0.8).font('Helvetica-Bold').fontSize(13);
  t(`Verdict: ${LOT_VERDICT_LABEL[d.verdict]}`);
  for (const p of d.plans) {
    t(
      `${p.planName}: ${LOT_VERDICT_LABEL[p.verdict]} (${p.sample.judged} of ${p.sample.planned} devices judged, ${p.sample.failures} failed)`,
      { indent: 8 },
    );
  }
  doc.font('Helvetica').fontSize(10);
  for (const r of d.reasons) t(`- ${r}`, { indent: 8 });
  if (d.gainReference.normalisedReadings > 0) {
    t(
      `${d.gainReference.normalisedReadings} hFE readings were measured away from ${d.gainReference.referenceC} °C and referred to it (XTB ${d.gainReference.xtb}).`,
    );
  }
}

function writeDriftTable(doc: Pdf, t: Write, d: LotDetail) {
  doc.moveDown(0.8).font('Helvetica-Bold').fontSize(12);
  t('Drift per read point');
  doc.font('Helvetica').fontSize(8.5);
  const cols = ['Hours', 'Devices', 'Late', 'hFE mean %', 'hFE sd', 'hFE p5', 'hFE p95', 'ICBO x med', 'ICBO x p95', 'VCEsat mV', 'Fails'];
  const widths = [40, 42, 30, 52, 40, 40, 40, 52, 52, 52, 34];
  const row = (cells: string[], bold = false) => {
    const y = doc.y;
    let x = doc.page.margins.left;
    doc.font(bold ? 'Helvetica-Bold' : 'Helvetica');
    cells.forEach((c, i) => {
      doc.text(pdfText(c), x, y, { width: widths[i] - 4, lineBreak: false });
      x += widths[i];
    });
    doc.x = doc.page.margins.left;
    doc.y = y + 13;
  };
  row(cols, true);
  for (const r of d.readPoints) {
    row([
      fmt(r.hours, 5),
      String(r.devicesMeasured),
      String(r.late),
      fmt(r.hfeChangePct?.mean),
      fmt(r.hfeChangePct?.sd),
      fmt(r.hfeChangePct?.p5),
      fmt(r.hfeChangePct?.p95),
      fmt(r.icboRatio?.median),
      fmt(r.icboRatio?.p95),
      fmt(r.vcesatShiftMv?.mean),
      String(r.cumulativeFails),
    ]);
  }
}

function writeTrends(doc: Pdf, t: Write, d: LotDetail) {
  doc.moveDown(0.8).font('Helvetica-Bold').fontSize(12);
  t('Trend and pseudo-failure time');
  doc.font('Helvetica').fontSize(10);
  for (const tr of d.trends) {
    t(
      `${PARAM[tr.parameter]}: ${tr.model === 'log-ratio-origin' ? 'ln(ratio)' : 'change'} = ${fmt(tr.slopePerHour, 4)} per hour (line through the origin); limit ${fmt(tr.limit)}; ` +
        (tr.pseudoFailureH === null ? 'no crossing projected.' : `crossing at ${fmt(tr.pseudoFailureH, 4)} h.`),
    );
  }
}

function writeFailureRate(doc: Pdf, t: Write, d: LotDetail) {
  doc.moveDown(0.8).font('Helvetica-Bold').fontSize(12);
  t('Failure rate');
  doc.font('Helvetica').fontSize(10);
  if (d.fit) {
    t(`Mechanism: ${d.fit.mechanismLabel}. ${d.fit.model}; ${describeParameters(d.fit.parameters)}.`);
    if (d.fit.junction.tjMeanC !== null)
      t(
        `Estimated junction over the credited hours: mean ${fmt(d.fit.junction.tjMeanC, 4)} °C, ${fmt(d.fit.junction.tjMinC!, 4)} to ${fmt(d.fit.junction.tjMaxC!, 4)} °C.`,
      );
    t(
      `${d.fit.failures} failures in ${d.fit.devices} devices × ${fmt(d.fit.hoursEach, 5)} h = ${fmt(d.fit.deviceHours, 6)} device-hours; ` +
        `mean acceleration factor ${fmt(d.fit.accelerationFactor, 4)} (Ea ${d.fit.constants.eaEv} eV, use ${d.fit.constants.useC} °C, mean junction ${fmt(d.fit.constants.stressC, 4)} °C, ${d.fit.constants.stressBasis}).`,
    );
    t(`FIT upper bound: ${fmt(d.fit.fit60, 4)} at 60 % confidence, ${fmt(d.fit.fit90, 4)} at 90 % (${d.fit.method}).`);
    t(`k = ${d.fit.constants.boltzmannEvPerK} eV/K (${d.fit.constants.source}), T(K) = T(°C) + ${d.fit.constants.kelvinOffset}.`);
  } else t(d.plans.find((p) => p.planId === d.plan?.id)?.fitUnavailable ?? 'No read point after time zero yet.');
}

function writeFailedDevices(doc: Pdf, t: Write, d: LotDetail) {
  const failed = d.devices.filter((x) => x.firstFailedH !== null);
  if (failed.length) {
    doc.moveDown(0.8).font('Helvetica-Bold').fontSize(12);
    t('Failed devices');
    doc.font('Helvetica').fontSize(10);
    for (const x of failed)
      t(
        `${x.serial} (socket ${x.socketIndex}): first failed at ${fmt(x.firstFailedH, 5)} h - ${x.failedParameters.map((p) => PARAM[p]).join(', ')}`,
      );
  }
}

export function lotReportPdf(d: LotDetail, extra: { notes: string; generatedAt: Date }): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const doc = new PDFDocument({ size: 'A4', margin: 48, info: { Title: `Lot ${d.lotCode} drift report`, Author: 'Emberlot' } });
    const chunks: Buffer[] = [];
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
    const t: Write = (s, opts) => doc.text(pdfText(s), opts);

    writeHeading(doc, t, d, extra);
    writeVerdict(doc, t, d);
    writeDriftTable(doc, t, d);
    writeTrends(doc, t, d);
    writeFailureRate(doc, t, d);
    writeFailedDevices(doc, t, d);
    writeRecordsPdf(doc, t, d);

    doc.moveDown(1.2).font('Helvetica-Oblique').fontSize(9).fillColor('#7a4b00');
    t(`Caution: ${d.caution}`);
    doc.end();
  });
}
