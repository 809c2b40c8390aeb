import * as fs from 'node:fs';
import type { Download } from 'playwright-core';
import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Qualifications (issue #22): an engineer creates a qualification from the AEC-Q101 template for
 * HPD-2N140 on its three demo lots and sees the matrix (HTRB passed on HG2611-A's runs, under
 * stress on HG2612-C), opens a cell and its drift chart, waives a group and withdraws the waiver
 * (kept on record); a manager opens the complete demo qualification QUAL-002 and
 * downloads its PDF and CSV (status, content type, size, page count, a known cell value).
 */
export const qualification: Journey = {
  name: 'qualification',
  run: async (j) => {
    const { page } = j;
    const name = `HPD-2N140 release ${j.unique}`;

    // --- Engineer: create from a template --------------------------------------------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === '/plans');
    await j.navTo('Qualifications');
    await page.waitForURL((u) => u.pathname === '/qualifications');
    await expect(page.getByTestId('qual-item-QUAL-001')).toBeVisible();
    const form = page.getByTestId('qual-new');
    await form.scrollIntoViewIfNeeded();
    await form.getByTestId('qual-name').fill(name);
    await form.getByRole('radio', { name: 'AEC-Q101 discrete qualification' }).click();
    await expect(form.getByTestId('qual-template-note')).toContainText("confirm against the standard's current revision");
    await form.getByTestId('qual-type-HPD-2N140').click();
    for (const lot of ['HG2611-A', 'HG2611-B', 'HG2612-C']) await form.getByTestId(`qual-lot-${lot}`).click();
    await j.shot('qual-create-form');
    await form.getByTestId('qual-create').click();
    await page.waitForURL((u) => /^\/qualifications\/[0-9a-f-]{36}$/.test(u.pathname));
    await expect(page.getByRole('heading', { name: new RegExp(`QUAL-\\d{3} · ${name}`) })).toBeVisible();
    await expect(page.getByTestId(j.size === 'phone' ? 'qual-matrix-cards' : 'qual-matrix-grid')).toBeVisible();
    const htrbA = page.getByTestId('qual-cell-htrb-HG2611-A');
    await expect(htrbA).toBeVisible();
    await expect(page.getByTestId('qual-cell-htrb-HG2612-C')).toContainText('Under stress');
    await expect(page.getByTestId('qual-cell-tc-HG2611-A')).toContainText('Not started');
    // In the full sequence the evidence journey has already entered dead devices on HG2611-B, whose
    // HTRB verdict then fails: a failed cell fails the qualification; otherwise it is in progress.
    const bFailed = /Failed/.test(await page.getByTestId('qual-cell-htrb-HG2611-B').innerText());
    await expect(page.getByTestId('qual-status')).toContainText(bFailed ? 'Failed' : 'In progress');
    await j.checkA11y('qualification matrix');
    await j.shot('qual-matrix');
    await htrbA.click();
    const panel = page.getByTestId('qual-cell-panel');
    await expect(panel).toContainText('Lot verdict for this stress: Passed');
    await expect(panel).toContainText('Run HTRB-2611-A');
    await expect(panel).toContainText("confirm against the standard's current revision");
    await panel.scrollIntoViewIfNeeded();
    await j.shot('qual-cell-panel');

    // The cell's own drift: the lot chart on the runs its verdict judged.
    await panel.getByTestId('qual-cell-drift-toggle').click();
    await expect(panel.getByTestId('qual-cell-drift-source')).toContainText('Lot HG2611-A on runs HTRB-2611-A, HTRB-2611-A-2');
    const chart = panel.getByTestId('lot-chart');
    await expect(chart.locator('svg').first()).toBeVisible(30000);
    const chartLabel = (await chart.getAttribute('aria-label')) ?? '';
    if (!chartLabel.startsWith('hFE change % of lot HG2611-A: 0 h median') || !chartLabel.includes('; 1000 h median'))
      throw new Error(`the cell chart says "${chartLabel.slice(0, 160)}"`);
    await chart.scrollIntoViewIfNeeded();
    await j.checkA11y('qualification cell drift');
    await j.shot('qual-cell-drift');

    // Waive a group with no run here, then withdraw the waiver: kept on record, the cell open again.
    const sd = page.getByTestId('qual-cell-sd-HG2611-A');
    await sd.scrollIntoViewIfNeeded();
    await sd.click();
    await expect(panel).toContainText('Solderability');
    await panel
      .getByTestId('qual-cell-waiver-reason')
      .fill('Same lead frame and plating as HPD-2N120; solderability shown on its release.');
    await panel.getByTestId('qual-cell-waive').click();
    await expect(sd).toContainText('Waived');
    await panel.getByTestId('qual-withdraw-waiver').click();
    const dialog = page.getByTestId('qual-withdraw-dialog');
    await expect(dialog).toBeVisible();
    await expect(page.getByRole('dialog')).toBeVisible(); // the modal settled (its role is set once it has opened)
    const withdrawReason = `The customer asks for solderability on this lot itself (${j.size}).`;
    await dialog.getByTestId('qual-withdraw-reason').fill(withdrawReason);
    await j.checkA11y('withdraw a waiver');
    await j.shot('qual-withdraw-dialog');
    await dialog.getByRole('button', { name: 'Withdraw', exact: true }).click();
    await expect(dialog).toHaveCount(0);
    await expect(sd).toContainText('Not started');
    await expect(panel.getByTestId('qual-cell-withdrawn')).toContainText(withdrawReason);
    await expect(panel.getByTestId('qual-withdraw-waiver')).toHaveCount(0);
    const reasonLeft = await panel.getByTestId('qual-cell-waiver-reason').inputValue();
    if (reasonLeft !== '') throw new Error(`the waiver field came back filled: "${reasonLeft}"`);
    await panel.scrollIntoViewIfNeeded();
    await j.shot('qual-withdrawn');

    // --- Manager: read the complete one and download both files ---------------------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    await j.navTo('Qualifications');
    await page.waitForURL((u) => u.pathname === '/qualifications');
    await expect(page.getByTestId('qual-new')).toHaveCount(0);
    await page.getByTestId('qual-item-QUAL-002').click();
    await page.waitForURL((u) => /^\/qualifications\/[0-9a-f-]{36}$/.test(u.pathname));
    await expect(page.getByTestId('qual-status')).toContainText('Complete');
    await expect(page.getByTestId('qual-cell-c-life-HG2606-K')).toContainText('Passed');
    await expect(page.getByTestId('qual-cell-e-iol-HG2606-K')).toContainText('Waived');
    await j.checkA11y('complete qualification');
    await j.shot('qual-complete');

    const fetchFile = async (testId: string): Promise<{ d: Download; body: Buffer }> => {
      const [d] = await Promise.all([page.waitForEvent('download', { timeout: 30000 }), page.getByTestId(testId).click()]);
      const p = await d.path();
      if (!p) throw new Error(`${testId}: the download failed (${await d.failure()})`);
      return { d, body: fs.readFileSync(p) };
    };
    const pdf = await fetchFile('qual-download-pdf');
    if (pdf.d.suggestedFilename() !== 'qualification-QUAL-002-report.pdf') throw new Error(`PDF named ${pdf.d.suggestedFilename()}`);
    if (pdf.body.subarray(0, 5).toString('latin1') !== '%PDF-') throw new Error('the PDF does not start with %PDF-');
    const pages = (pdf.body.toString('latin1').match(/\/Type \/Page\b/g) ?? []).length;
    if (pdf.body.length < 5000 || pages < 2) throw new Error(`the PDF looks thin: ${pdf.body.length} B, ${pages} pages`);
    const csv = await fetchFile('qual-download-csv');
    if (csv.d.suggestedFilename() !== 'qualification-QUAL-002-report.csv') throw new Error(`CSV named ${csv.d.suggestedFilename()}`);
    const text = csv.body.toString('utf8');
    if (!/Group C steady-state operating life,HG2606-K,hotl,.*,45,0,45,45,0,Passed,Passed,/.test(text))
      throw new Error(`the CSV lacks the group C life cell: ${text.slice(0, 400)}`);
    const id = new URL(page.url()).pathname.split('/').pop();
    for (const [kind, type] of [
      ['csv', 'text/csv'],
      ['pdf', 'application/pdf'],
    ] as const) {
      const r = await page.request.get(`${j.baseUrl}/api/qualifications/${id}/report.${kind}`);
      if (r.status() !== 200 || !(r.headers()['content-type'] ?? '').startsWith(type))
        throw new Error(`report.${kind}: ${r.status()} ${r.headers()['content-type']}`);
    }
    j.log(`downloads: PDF ${pdf.body.length} B, ${pages} pages; CSV ${csv.body.length} B`);
  },
};
