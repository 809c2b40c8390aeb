/**
 * Certificate of conformance for a lot that passed its acceptance plan(s).
 *
 * The rule (Emberlot's, stated on the certificate): a certificate is issued only when
 *  1. the lot's verdict, judged now from its evidence (shared/verdict via the analytics evidence
 *     path), is "passed" — every plan the lot was stressed under passed; and
 *  2. at least one electronic signature with the meaning "approved for release" signs that
 *     verdict over the evidence as it stands now (same SHA-256: not stale).
 * Otherwise the request is refused (409) with the reason. The certificate names the part, lot and
 * traceability fields, each plan with its conditions and method, sample, failures and LTPD, the
 * signers and the hash of the signed evidence.
 */
import { criteriaWords } from '../../../shared/domain/criteria-words';
import { formatUtc } from '../../../shared/domain/format';
import { PLAN_KIND_LABEL } from '../../../shared/schemas/plans';
import { SOURCES } from '../../../shared/plan-templates';
import { writeTraceability } from './blocks';
import { ALERT, CAUTION_INK, contentWidth, field, fmt, footers, heading, INK, MUTED, newPdf, para, pctText, table, FONT } from './pdf-doc';
import type { LotReportData, ReportPlan, ReportSignature } from './report-data';
import type { PlanConditionRow } from './reports.data';

/** Why a certificate cannot be issued, or null when it can. */
export function certificateRefusal(d: Pick<LotReportData, 'lot' | 'verdict' | 'verdictLabel' | 'signatures'>): string | null {
  if (d.verdict !== 'passed')
    return `Lot ${d.lot.code} has not passed its acceptance plan (verdict: ${d.verdictLabel.toLowerCase()}); a certificate of conformance is issued only for a passed lot.`;
  if (!approvals(d.signatures).length) {
    const stale = d.signatures.some((s) => s.stale);
    return (
      `Lot ${d.lot.code} passed, but no current signature approves the verdict for release` +
      (stale ? ' (the data under the earlier signatures has changed since)' : '') +
      '. An engineer or manager signs it as "approved for release" on the lot page first.'
    );
  }
  return null;
}

/** Current (not stale) signatures that approve a passed verdict for release. */
const approvals = (s: readonly ReportSignature[]) =>
  s.filter((x) => !x.stale && x.meaning === 'Approved for release' && x.verdict === 'Passed');

/** A tag such as "[pub: JESD22-A108; AEC-Q101 test table]" in words. */
export function sourceWords(tag: string | undefined): string {
  if (!tag) return 'the plan as written (no published method recorded)';
  const m = /^\[(\w+):\s*(.*)\]$/.exec(tag.trim());
  if (!m) return tag;
  if (m[1] === 'memory') return `${m[2]} (recalled, to be confirmed against the current revision)`;
  return m[2];
}

const SOURCE_BY_KIND: Record<string, string | undefined> = SOURCES;

export interface CertificateInput {
  report: LotReportData;
  plans: PlanConditionRow[];
}

/** The certificate number: lot code and the first 12 hex digits of the signed evidence hash. */
export const certificateNumber = (lotCode: string, hash: string) => `EMB-COC-${lotCode}-${hash.slice(0, 12).toUpperCase()}`;

function conditions(p: PlanConditionRow): string {
  const parts = [
    `${PLAN_KIND_LABEL[p.kind as keyof typeof PLAN_KIND_LABEL] ?? p.kind.toUpperCase()}`,
    `chamber ${fmt(p.chamber_c, 4)} °C`,
    p.humidity_pct !== null ? `${fmt(p.humidity_pct)} % RH` : '',
    `${fmt(p.duration_h, 5)} h`,
    `read points ${p.read_points_h.join(' / ')} h`,
  ];
  return parts.filter(Boolean).join(', ');
}

export async function certificatePdf({ report: r, plans }: CertificateInput): Promise<Buffer> {
  const signed = approvals(r.signatures);
  const number = certificateNumber(r.lot.code, r.evidenceHash);
  const { doc, done } = newPdf({ title: `Certificate of conformance ${number}`, subject: `${r.lot.partNumber} lot ${r.lot.code}` });
  doc.font(FONT.bold).fontSize(20).fillColor(INK);
  para(doc, 'Certificate of conformance');
  doc.font(FONT.regular).fontSize(9).fillColor(MUTED);
  para(doc, `No. ${number}    Issued ${formatUtc(r.generatedAt)} by Emberlot`);
  doc.moveDown(0.6).fillColor(INK);

  heading(doc, 'Product', 90);
  writeTraceability(doc, r.lot);

  heading(doc, 'Acceptance plans and results', 90);
  const byId = new Map(plans.map((p) => [p.id, p]));
  for (const p of r.plans) {
    const c = byId.get(p.planId);
    doc.font(FONT.bold).fontSize(9.5);
    para(doc, `${p.planName}${c ? ` (version ${c.version})` : ''}`);
    doc.font(FONT.regular).fontSize(9);
    if (c) {
      field(doc, 'Conditions', conditions(c));
      field(doc, 'Method', sourceWords(SOURCE_BY_KIND[c.kind]));
      field(doc, 'Failure criteria', `${criteriaWords(c.criteria)} - ${sourceWords(SOURCES.criteria)}`);
    }
    field(doc, 'Runs', p.runs.join(' + '));
    field(doc, 'Result', resultLine(p));
    doc.moveDown(0.3);
  }

  heading(doc, 'Statement', 80);
  doc.font(FONT.regular).fontSize(9.5);
  para(
    doc,
    `We certify that the sample drawn from lot ${r.lot.code} of ${r.lot.partNumber} was stressed and measured under the plan(s) above, ` +
      `and that the failures found did not exceed each plan's accept number, so the lot meets the acceptance plan(s) at the LTPD and ` +
      `confidence stated. This certifies the result of these stress tests on this lot only: it is not a statement about other lots, ` +
      `about conditions outside those tested, or a substitute for the purchaser's incoming inspection.`,
  );

  heading(doc, 'Approved by', 70);
  table(
    doc,
    [
      { header: 'Name', width: 120 },
      { header: 'E-mail', width: 150 },
      { header: 'Meaning', width: 90 },
      { header: 'Signed', width: contentWidth(doc) - 360 },
    ],
    signed.map((s) => [s.name, s.email, s.meaning, formatUtc(s.signedAt)]),
  );
  doc.moveDown(0.4).font(FONT.regular).fontSize(8.5).fillColor(INK);
  para(doc, 'The signatures are electronic (printed name, meaning and time of signing) and sign the SHA-256 of the judged evidence:');
  doc.moveDown(0.25).font(FONT.mono).fontSize(8.5);
  para(doc, r.evidenceHash);
  doc.moveDown(0.25);
  doc.font(FONT.regular).fontSize(7.5).fillColor(MUTED);
  para(
    doc,
    'Issue rule: the lot verdict judged now is "passed" and at least one current signature approves it for release (its hash equals the one above). ' +
      'A later change to the readings or dispositions changes the hash and withdraws this certificate until the verdict is signed again.',
  );
  doc.moveDown(0.4).fillColor(CAUTION_INK);
  para(
    doc,
    'Stress testing used high voltage and hot ovens; the rigs carry hardware interlocks, and the lab safety rules and local codes apply.',
  );
  if (r.plans.some((p) => p.failures > p.acceptNumber)) {
    doc.fillColor(ALERT);
    para(doc, 'Check: a plan shows more failures than its accept number.');
  }
  footers(doc, `${number} - lot ${r.lot.code}`);
  doc.end();
  return done;
}

function resultLine(p: ReportPlan): string {
  return (
    `${p.judged} of ${p.planned} devices judged${p.removed ? ` (${p.removed} removed)` : ''}, ${p.failures} failed, accept number ${p.acceptNumber}; ` +
    `LTPD ${pctText(p.planLtpd)} at ${fmt(p.confidence * 100)} % confidence by plan, ${p.demonstratedLtpd === null ? 'none' : pctText(p.demonstratedLtpd)} demonstrated - ${p.verdict}`
  );
}
