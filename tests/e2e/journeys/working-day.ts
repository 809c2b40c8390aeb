import * as fs from 'node:fs';
import type { Page } from 'playwright-core';
import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/** Nothing wider than the window, and the element's box inside it (issue #23 item 1). */
async function assertFitsViewport(page: Page, what: string, boxes: Array<{ name: string; locator: ReturnType<Page['locator']> }>) {
  // A string, not a function: the node-side type-check has no DOM library.
  const { scrollWidth, innerWidth, offenders } = (await page.evaluate(`(() => {
    const w = window.innerWidth;
    const wide = Array.from(document.querySelectorAll('body *'))
      .filter((e) => e.getBoundingClientRect().right > w + 1 && e.getBoundingClientRect().width > 0)
      .slice(-3)
      .map((e) => e.tagName.toLowerCase() + '[' + (e.textContent || '').slice(0, 40) + '] right=' + Math.round(e.getBoundingClientRect().right));
    return { scrollWidth: document.documentElement.scrollWidth, innerWidth: w, offenders: wide };
  })()`)) as { scrollWidth: number; innerWidth: number; offenders: string[] };
  if (scrollWidth > innerWidth)
    throw new Error(`${what}: the page is ${scrollWidth} px wide in a ${innerWidth} px window (${offenders.join(' | ')})`);
  for (const b of boxes) {
    const box = await b.locator.first().boundingBox();
    if (!box) throw new Error(`${what}: ${b.name} is not laid out`);
    if (box.x < 0 || box.x + box.width > innerWidth + 0.5) {
      throw new Error(`${what}: ${b.name} spans x ${Math.round(box.x)}–${Math.round(box.x + box.width)} in a ${innerWidth} px window`);
    }
  }
}

/**
 * The working day, smoothed (issue #23 items 1, 4, 5, 10): booking on a phone without sideways
 * scrolling, the device-type form's error summary and polarity by class, People without a 403 for
 * an engineer, the rig page's runs and "Load sockets", the socket's estimated junction, the
 * Alarms badge, and a read-point file whose units come from its headers.
 */
export const workingDay: Journey = {
  name: 'working-day',
  run: async (j) => {
    const { page } = j;
    const forbidden: string[] = [];
    page.on('response', (r) => {
      if (r.status() === 403) forbidden.push(`${r.request().method()} ${new URL(r.url()).pathname}`);
    });

    // --- Engineer: new device type — polarity by class, error summary focused on submit -----
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === DEMO.engineer.home);
    await j.navTo('Devices & lots');
    await page.waitForURL((u) => u.pathname === '/devices');
    await page.getByRole('button', { name: 'New device type' }).click();
    const form = page.getByTestId('device-type-form');
    const polarity = form.getByTestId('device-polarity');
    // Bipolar (the default): NPN and PNP only.
    await expect(polarity.getByRole('radio', { name: 'NPN', exact: true })).toBeVisible();
    await expect(polarity.getByRole('radio', { name: 'PNP', exact: true })).toBeVisible();
    await expect(form.getByRole('radio', { name: 'N-channel', exact: true })).toHaveCount(0);
    await expect(form.getByRole('radio', { name: 'rectifier', exact: true })).toHaveCount(0);
    await form.getByRole('radio', { name: 'MOSFET', exact: true }).click();
    await expect(polarity.getByRole('radio', { name: 'N-channel', exact: true })).toBeVisible();
    await expect(form.getByRole('radio', { name: 'NPN', exact: true })).toHaveCount(0);
    await form.getByRole('radio', { name: 'Diode (rectifier)', exact: true }).click();
    await expect(form.getByText('A rectifier has no polarity to choose.')).toBeVisible();
    await expect(form.getByRole('radio', { name: 'P-channel', exact: true })).toHaveCount(0);
    await form.getByRole('radio', { name: 'Bipolar (BJT)', exact: true }).click();
    // Submit empty: the summary at the top names every field and takes the focus.
    await page.getByTestId('device-type-submit').click();
    const summary = page.getByTestId('device-type-errors');
    await expect(summary).toBeVisible();
    await expect(summary).toContainText(/\d+ fields need fixing before saving/);
    await expect(summary).toContainText('Part number: Enter a part number');
    await expect(summary).toContainText('Polarity: Choose the polarity');
    const focused = await page.evaluate(
      `document.activeElement && (document.activeElement.getAttribute('data-testid') || document.activeElement.tagName)`,
    );
    if (focused !== 'device-type-errors') throw new Error(`focus after a refused submit is on ${focused}, not the error summary`);
    const top = await summary.boundingBox();
    if (!top || top.y < 0 || top.y > SIZE_HEIGHT[j.size]) throw new Error(`the error summary is not in view (y ${top?.y})`);
    await j.checkA11y('device type form with errors');
    await j.shot('device-type-errors');
    await form.getByRole('button', { name: 'Cancel', exact: true }).click();

    // --- Engineer: People is not theirs, and no request is refused on the way -------------
    await page.goto(`${j.baseUrl}/people`);
    await expect(page.getByTestId('not-for-role')).toBeVisible();
    await page.waitForTimeout(1500);
    if (forbidden.length) throw new Error(`requests answered 403 for an engineer: ${forbidden.join(', ')}`);

    // --- Engineer: booking on a phone — long chips wrap, nothing scrolls sideways ----------
    await j.navTo('Schedule');
    await page.waitForURL((u) => u.pathname === '/schedule');
    await page.getByRole('button', { name: 'Book a run' }).click();
    const chip = page.getByRole('checkbox', { name: 'HTRB 150 °C (Tj max), 80 % VCBO, 1000 h (JESD22-A108) · HPD-2N140' });
    await expect(chip).toBeVisible();
    await assertFitsViewport(page, 'booking, before a plan', [{ name: 'the plan chip', locator: chip }]);
    await chip.click();
    await expect(page.getByText('Lots of HPD-2N140')).toBeVisible();
    await assertFitsViewport(page, 'booking, plan chosen', [
      { name: 'the Schedule heading', locator: page.getByRole('heading', { name: 'Schedule' }) },
      { name: 'the chosen plan chip (with its part number)', locator: chip },
      { name: 'the lots label with the part number', locator: page.getByText('Lots of HPD-2N140') },
    ]);
    await chip.scrollIntoViewIfNeeded();
    await j.checkA11y('booking, plan chosen');
    await j.shot('booking-plan-chosen');
    await page.getByRole('button', { name: 'Close', exact: true }).click();

    // --- Operator: Alarms badge on the navigation -----------------------------------------
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname === '/floor');
    const counts = (await (await page.request.get(`${j.baseUrl}/api/alarms/counts`)).json()) as { open: number };
    if (counts.open > 0) {
      const alarmsNav = page.getByRole('link', { name: /^Alarms, \d+ open$/ });
      await expect(alarmsNav).toBeVisible();
      const label = (await alarmsNav.first().getAttribute('aria-label')) ?? '';
      const shown = Number(/(\d+) open/.exec(label)?.[1]);
      j.log(`alarms badge: "${label}" (API said ${counts.open} open)`);
      if (!(Math.abs(shown - counts.open) <= 2)) throw new Error(`badge says ${shown} open; the API says ${counts.open}`);
      await expect(page.getByTestId('nav-badge').first()).toBeVisible();
    } else j.log('no open alarms yet: the badge step checks the plain label');
    await j.shot('alarms-badge');

    // --- Operator: the rig page shows its runs; booked ones are links ----------------------
    await page.goto(`${j.baseUrl}/floor/OV-02`);
    await expect(page.getByRole('heading', { name: 'Rig OV-02' }).first()).toBeVisible();
    const rigRuns = page.getByTestId('rig-runs');
    await expect(rigRuns).toBeVisible();
    await expect(page.getByText('Run', { exact: true })).toHaveCount(0); // no "Run: None" row any more
    await expect(rigRuns.getByRole('link', { name: 'Open run HTRB-2611-A+1' })).toBeVisible();
    await expect(page.getByTestId('rig-upcoming')).toContainText(/HTRB-2611-A\+1 · starts .+ · HPD-2N140, \d+ devices · 1000 h/);
    await page.getByTestId('rig-upcoming').scrollIntoViewIfNeeded();
    await j.checkA11y('rig page with bookings');
    await j.shot('rig-upcoming');

    // A rig whose run is being loaded: "Load sockets" from the rig page straight to the socket map.
    await page.goto(`${j.baseUrl}/floor/OV-06`);
    await expect(page.getByTestId('rig-run-now')).toContainText('IOL-2605-H');
    await expect(page.getByTestId('rig-run-now').getByRole('link', { name: 'Open run IOL-2605-H' })).toBeVisible();
    await page.getByTestId('rig-load-sockets').scrollIntoViewIfNeeded();
    await j.shot('rig-load-sockets');
    await page.getByTestId('rig-load-sockets').click();
    await page.waitForURL((u) => u.pathname.startsWith('/runs/'));
    await expect(page.getByRole('heading', { name: 'IOL-2605-H' }).first()).toBeVisible();
    await expect(page.getByLabel('Serials', { exact: true })).toBeVisible();

    // --- Operator: a socket's estimated junction, with how it was estimated ----------------
    // Fresh stacks: the simulated rig may need a minute to connect and report.
    await page.goto(`${j.baseUrl}/floor/OV-03`);
    await expect(page.getByRole('button', { name: /^Socket 2, D\d{4}, case -?\d+\.\d °C/ })).toBeVisible(90000);
    await page.getByRole('button', { name: /^Socket 2, / }).click();
    const detail = page.getByTestId('socket-detail');
    await expect(detail).toContainText(/Junction \(estimated\)\s+-?\d+\.\d °C/, 20000);
    await expect(page.getByTestId('socket-junction-how')).toContainText(/^Estimated as case -?\d+\.\d °C \+ θjc [\d.]+ °C\/W × [\d.e-]+ W/);
    await detail.scrollIntoViewIfNeeded();
    await j.checkA11y('socket detail with junction');
    await j.shot('socket-junction');

    // --- Operator: read-point file — columns listed, template, units from the headers -------
    const board = (await (await page.request.get(`${j.baseUrl}/api/floor/rigs/OV-03`)).json()) as {
      sockets: Array<{ serial: string | null }>;
    };
    const serials = board.sockets.map((s) => s.serial).filter((s): s is string => !!s);
    await j.navTo('Read points');
    await page.waitForURL((u) => u.pathname === '/readings');
    await page.getByRole('radio', { name: /^HOTL-2609-D-2 · HG2609-D · / }).click();
    await page.getByRole('radio', { name: /^0 h · \d+\/40 stored/ }).click();
    const panel = page.getByTestId('upload-panel');
    await expect(panel.getByTestId('accepted-columns')).toContainText('IC for hFE · pA, nA, µA, mA or A');
    await expect(panel.getByTestId('accepted-columns')).toContainText('VCE(sat) · mV or V');
    const [dl] = await Promise.all([page.waitForEvent('download'), page.getByTestId('download-template').click()]);
    const template = fs.readFileSync(await dl.path(), 'utf8');
    if (!template.startsWith('serial,hfe,IC (A),VCE (V),ICBO (nA),VCB (V),VCE(sat) (mV)'))
      throw new Error(`template header: ${template.split('\n')[0]}`);

    // A header without a unit: refused before anything is sent, naming the column.
    const noUnit = ['serial,hfe,IC,VCE (V),ICBO [nA],VCB (V),VCE(sat)/V', `${serials[0]},72.1,1,5,35,80,0.42`].join('\n');
    await page
      .getByTestId('csv-file-input')
      .setInputFiles({ name: `no-unit-${j.size}.csv`, mimeType: 'text/csv', buffer: Buffer.from(noUnit) });
    const mapping = page.getByTestId('column-mapping');
    await expect(mapping).toBeVisible();
    await expect(page.getByTestId('map-hfe_ic_a')).toContainText(
      'Column "IC" (IC for hFE) states no unit; write it in the header, e.g. "IC (A)"',
    );
    await expect(page.getByTestId('map-icbo_a')).toContainText('Unit nA, from the header');
    await expect(page.getByTestId('map-vcesat_v')).toContainText('Unit V, from the header');
    if ((await page.getByTestId('upload-preview').getAttribute('aria-disabled')) !== 'true')
      throw new Error('Check is offered with a unit missing');
    const mapBox = await mapping.boundingBox();
    j.log(`column mapping height ${Math.round(mapBox?.height ?? -1)} px`);
    if (!mapBox || mapBox.height > 844)
      throw new Error(`the column mapping is ${Math.round(mapBox?.height ?? 0)} px tall: more than one phone screen`);
    await mapping.scrollIntoViewIfNeeded();
    await j.checkA11y('upload, unit missing');
    await j.shot('upload-unit-missing');

    // 10 A of collector current for hFE on a 2 A part: refused with the numbers.
    const amps = [
      'serial,hfe,IC (A),VCE (V),ICBO [nA],VCB (V),VCE(sat)/mV',
      `${serials[0]},72.1,10,5,35,80,420`,
      `${serials[1]},70.3,1,5,41,80,450`,
    ].join('\n');
    await page
      .getByTestId('csv-file-input')
      .setInputFiles({ name: `ten-amps-${j.size}.csv`, mimeType: 'text/csv', buffer: Buffer.from(amps) });
    await expect(page.getByTestId('column-summary')).toContainText('IC for hFE ← IC (A)');
    await page.getByTestId('upload-preview').click();
    const preview = page.getByTestId('upload-preview-result');
    await expect(preview).toContainText(/2 rows: 1 new, 0 replace a stored reading, 0 already stored, 1 refused\./);
    await expect(page.getByTestId('upload-preview-rows')).toContainText(
      /The hFE test current 10 A is above the rated IC max of HPD-\w+ \([\d.]+ m?A\)/,
    );
    await preview.scrollIntoViewIfNeeded();
    await j.checkA11y('upload, implausible current');
    await j.shot('upload-ten-amps');
  },
};

const SIZE_HEIGHT = { phone: 844, wide: 900 } as const;
