import * as fs from 'node:fs';
import type { Download } from 'playwright-core';
import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

const DRIFTING_LOT = 'HG2612-C';

/** Manager: lot trends with the drifting demo lot flagged, its devices and drift, and both exports. */
export const managerTrends: Journey = {
  name: 'manager-trends',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    await expect(page.getByRole('heading', { name: 'Lot trends' }).first()).toBeVisible();

    // The drifting lot is flagged in words (and a shape), not colour alone.
    const table = page.getByTestId('trends-table');
    await expect(table).toBeVisible(30000);
    const row = table.locator('[role="row"], [role="listitem"]').filter({ hasText: DRIFTING_LOT });
    await expect(row).toHaveCount(1, 15000);
    await expect(row).toContainText('Drifting');
    await expect(row).toContainText('HPD-2N140');
    // Its mean hFE change is a clear negative percentage.
    const rowText = await row.innerText();
    const drift = rowText.match(/−(\d+(?:\.\d+)?) %/);
    if (!drift || Number(drift[1]) < 5) throw new Error(`${DRIFTING_LOT} shows no marked hFE drop: ${rowText.replace(/\s+/g, ' ')}`);
    // Worst first: no passed lot sorts above it.
    await expect(page.getByTestId('verdict-drifting').first()).toBeVisible();
    await expect(page.getByTestId('trends-chart')).toBeVisible();
    await j.checkA11y('lot trends');
    await j.shot('trends');

    // Filtering to "Drifting" keeps it.
    await page.getByTestId('trends-verdict-filter').getByRole('radio', { name: 'Drifting' }).click();
    await expect(table.locator('[role="row"], [role="listitem"]').filter({ hasText: DRIFTING_LOT })).toHaveCount(1);
    await row.scrollIntoViewIfNeeded();
    await j.shot('trends-drifting-only');

    // --- The lot ------------------------------------------------------------------------
    await page
      .getByRole('button', { name: `Open lot ${DRIFTING_LOT}` })
      .first()
      .click();
    await page.waitForURL((u) => u.pathname.startsWith('/trends/lots/'));
    await expect(page.getByRole('heading', { name: DRIFTING_LOT }).first()).toBeVisible(30000);
    await expect(page.getByTestId('verdict-drifting').first()).toBeVisible();
    const readPoints = page.getByTestId('lot-readpoints');
    await expect(readPoints).toBeVisible();
    await expect(readPoints).toContainText(/−\d+(\.\d+)? % ± \d/);
    const devices = page.getByTestId('lot-devices');
    await expect(devices).toBeVisible();
    await expect(devices).toContainText(/C\d{4}/);
    await expect(devices).toContainText(/−\d+(\.\d+)? %/);
    const count = (await page.getByRole('heading', { name: /^Devices \(\d+\)$/ }).innerText()).match(/\d+/)?.[0];
    if (!count || Number(count) < 10) throw new Error(`the lot lists ${count} devices`);
    j.log(`${DRIFTING_LOT}: ${count} devices, trends row "${rowText.replace(/\s+/g, ' ').slice(0, 160)}"`);
    await j.checkA11y('lot detail');
    await j.shot('lot-detail');
    await readPoints.scrollIntoViewIfNeeded();
    await j.shot('lot-drift-table');

    // --- Exports: the browser downloads each file ---------------------------------------
    const fetchFile = async (testId: string): Promise<{ d: Download; head: Buffer }> => {
      const [d] = await Promise.all([page.waitForEvent('download', { timeout: 30000 }), page.getByTestId(testId).click()]);
      const p = await d.path();
      if (!p) throw new Error(`${testId}: the download failed (${await d.failure()})`);
      return { d, head: fs.readFileSync(p) };
    };
    const csv = await fetchFile('export-csv');
    if (csv.d.suggestedFilename() !== `lot-${DRIFTING_LOT}-report.csv`) throw new Error(`CSV named ${csv.d.suggestedFilename()}`);
    const csvText = csv.head.toString('utf8');
    if (!csvText.includes(DRIFTING_LOT) || csvText.split('\n').length < 5)
      throw new Error(`CSV report looks empty: ${csvText.slice(0, 200)}`);
    const pdf = await fetchFile('export-pdf');
    if (pdf.d.suggestedFilename() !== `lot-${DRIFTING_LOT}-report.pdf`) throw new Error(`PDF named ${pdf.d.suggestedFilename()}`);
    if (pdf.head.subarray(0, 5).toString('latin1') !== '%PDF-') throw new Error('the PDF report does not start with %PDF-');
    // The same addresses answer 200 with the right content type.
    const lotId = new URL(page.url()).pathname.split('/').pop();
    for (const [kind, type] of [
      ['csv', 'text/csv'],
      ['pdf', 'application/pdf'],
    ] as const) {
      const r = await page.request.get(`${j.baseUrl}/api/reports/lots/${lotId}/report.${kind}`);
      if (r.status() !== 200 || !(r.headers()['content-type'] ?? '').startsWith(type)) {
        throw new Error(`report.${kind}: ${r.status()} ${r.headers()['content-type']}`);
      }
    }
    j.log(`exports: CSV ${csv.head.length} B, PDF ${pdf.head.length} B`);
    // The page stays put and shows no export error.
    await expect(page.getByRole('heading', { name: DRIFTING_LOT }).first()).toBeVisible();
    await j.shot('lot-exported');
  },
};
