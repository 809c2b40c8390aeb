import * as fs from 'node:fs';
import type { Page } from 'playwright-core';
import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

const FAILED_LOT = 'HG2610-E'; // two failures and a trip on E0012 (server/seed/seed-history.ts)
const PASSED_LOT = 'HG2609-D';

async function lotId(page: Page, baseUrl: string, code: string): Promise<string> {
  const r = await page.request.get(`${baseUrl}/api/lots?q=${encodeURIComponent(code)}`);
  const body = (await r.json()) as { items: Array<{ id: string; code: string }> };
  const lot = body.items.find((l) => l.code === code);
  if (!lot) throw new Error(`no demo lot ${code}`);
  return lot.id;
}

/** Pages of a PDF (objects of /Type /Page). */
const pageCount = (pdf: Buffer) => (pdf.toString('latin1').match(/\/Type \/Page[^s]/g) ?? []).length;

/**
 * Traceability and reports (issue #22 items 3–4): the engineer opens a lot, reads its wafer lot,
 * opens a device's whole history from the serial list (the tripped E0012: its socket, trip and
 * disposition), downloads the lot report, is told why a failed lot gets no certificate, approves a
 * passed lot's verdict and downloads its certificate of conformance.
 */
export const traceabilityReports: Journey = {
  name: 'traceability',
  run: async (j) => {
    const { page } = j;
    await page.context().clearCookies();
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === '/plans');

    // --- The lot page: traceability and the serials ----------------------------------------
    const failedId = await lotId(page, j.baseUrl, FAILED_LOT);
    await page.goto(`${j.baseUrl}/devices/lots/${failedId}`);
    await expect(page.getByRole('heading', { name: FAILED_LOT }).first()).toBeVisible();
    await expect(page.getByTestId('lot-wafer-value')).toContainText('W77');
    await expect(page.getByTestId('lot-assembly-value')).toContainText('A2610-01');
    await j.shot('lot-traceability');

    // --- A device's history, opened from the lot's serial list ------------------------------
    await page.getByRole('link', { name: 'History of device E0012' }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/devices/units/'));
    await expect(page.getByRole('heading', { name: 'E0012' }).first()).toBeVisible();
    await expect(page.getByTestId('device-trace-line')).toContainText('Wafer lot W77 · assembly lot A2610-01 · die revision B');
    await expect(page.getByText('Protection trip').first()).toBeVisible();
    await expect(page.getByTestId('device-dispositions').getByText(/Trip counts as a failure from 500 h/)).toBeVisible();
    await j.checkA11y('device history');
    await j.shot('device-history');

    // --- The lot report, downloaded from the lot page --------------------------------------
    await page.goto(`${j.baseUrl}/devices/lots/${failedId}`);
    const [report] = await Promise.all([page.waitForEvent('download', { timeout: 60000 }), page.getByTestId('export-pdf').click()]);
    if (report.suggestedFilename() !== `lot-${FAILED_LOT}-report.pdf`) throw new Error(`report named ${report.suggestedFilename()}`);
    const reportBytes = fs.readFileSync((await report.path())!);
    if (reportBytes.subarray(0, 5).toString('latin1') !== '%PDF-') throw new Error('the lot report is not a PDF');
    const r = await page.request.get(`${j.baseUrl}/api/reports/lots/${failedId}/report.pdf`);
    const rBytes = await r.body();
    if (r.status() !== 200 || r.headers()['content-type'] !== 'application/pdf' || rBytes.length < 20_000 || pageCount(rBytes) < 2)
      throw new Error(`lot report: ${r.status()} ${r.headers()['content-type']} ${rBytes.length} B ${pageCount(rBytes)} pages`);
    j.log(`lot report: ${rBytes.length} B, ${pageCount(rBytes)} pages`);

    // --- No certificate for a failed lot: the reason shows on the page -----------------------
    await page.getByTestId('export-certificate').click();
    await expect(page.getByTestId('download-error')).toContainText(`Lot ${FAILED_LOT} has not passed its acceptance plan`);
    await j.shot('certificate-refused');

    // --- A passed lot approved for release: the certificate downloads ------------------------
    const passedId = await lotId(page, j.baseUrl, PASSED_LOT);
    const signed = await page.evaluate(
      async ([id, password]) => {
        const res = await fetch(`/api/signoff/lots/${id}`, {
          method: 'POST',
          credentials: 'include',
          headers: { 'Content-Type': 'application/json', Accept: 'application/json' },
          body: JSON.stringify({ password, meaning: 'approved' }),
        });
        return res.status;
      },
      [passedId, DEMO.engineer.password] as const,
    );
    if (signed !== 201) throw new Error(`signing ${PASSED_LOT}: ${signed}`);
    await page.goto(`${j.baseUrl}/devices/lots/${passedId}`);
    await expect(page.getByRole('heading', { name: PASSED_LOT }).first()).toBeVisible();
    const [coc] = await Promise.all([page.waitForEvent('download', { timeout: 60000 }), page.getByTestId('export-certificate').click()]);
    if (coc.suggestedFilename() !== `lot-${PASSED_LOT}-certificate.pdf`) throw new Error(`certificate named ${coc.suggestedFilename()}`);
    const cocBytes = fs.readFileSync((await coc.path())!);
    const pages = pageCount(cocBytes);
    if (cocBytes.subarray(0, 5).toString('latin1') !== '%PDF-' || pages < 1 || pages > 2)
      throw new Error(`certificate: ${cocBytes.length} B, ${pages} pages`);
    const c = await page.request.get(`${j.baseUrl}/api/reports/lots/${passedId}/certificate.pdf`);
    if (c.status() !== 200 || c.headers()['content-type'] !== 'application/pdf') throw new Error(`certificate: ${c.status()}`);
    j.log(`certificate: ${cocBytes.length} B, ${pages} page(s)`);
    await expect(page.getByTestId('download-error')).toHaveCount(0);
    await j.shot('certificate-downloaded');
  },
};
