import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

const DEMO_RIGS = ['OV-01', 'OV-02', 'OV-03', 'OV-04', 'HC-05', 'OV-06'];

/**
 * Operator: the floor with every demo rig live, one rig's board and chart, socket loading of the
 * demo run being loaded (flags before anything is stored), an alarm acknowledged with a note, and
 * a read-point file with one bad row checked.
 */
export const operatorFloor: Journey = {
  name: 'operator-floor',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname === '/floor');

    // --- Floor: a tile per demo rig, live --------------------------------------------------
    await expect(page.getByRole('heading', { name: 'Floor' }).first()).toBeVisible();
    for (const code of DEMO_RIGS) await expect(page.getByTestId(`rig-tile-${code}`)).toBeVisible();
    await expect(page.getByTestId('floor-summary')).toContainText(/^\d+ of \d+ rigs online · \d+ running · \d+ open alarms?$/);
    await expect(page.getByTestId('floor-live')).toContainText('Live');
    const tile = page.getByTestId('rig-tile-OV-03');
    const chamberOf = async () => {
      const m = (await tile.innerText()).match(/chamber\s+(-?\d+\.\d) °C/i);
      if (!m) throw new Error(`no chamber temperature on the OV-03 tile: ${await tile.innerText()}`);
      return Number(m[1]);
    };
    const chamber = await chamberOf();
    if (!(chamber > 0 && chamber < 200)) throw new Error(`OV-03 chamber reads ${chamber} °C`);
    await expect(tile).toContainText('Run HOTL-2609-D-2');
    await j.checkA11y('floor');
    await j.shot('floor');

    // The tile updates without a reload: its text (chamber, stress hours) changes within seconds.
    const before = await tile.innerText();
    const url = page.url();
    let after = before;
    for (let i = 0; i < 60 && after === before; i++) {
      await page.waitForTimeout(250);
      after = await tile.innerText();
    }
    if (after === before) throw new Error('the OV-03 tile did not change within 15 s');
    if (page.url() !== url) throw new Error('the page navigated while waiting for a live update');
    const hoursOf = (t: string) => t.match(/· ([\d.]+ (?:h|min)|\d+ d \d+ h) stressed/)?.[1] ?? '?';
    j.log(`OV-03 live: chamber ${chamber} → ${await chamberOf()} °C, stress ${hoursOf(before)} → ${hoursOf(after)}`);

    // --- One rig: board legend and chart --------------------------------------------------
    await tile.click();
    await page.waitForURL((u) => u.pathname === '/floor/OV-03');
    await expect(page.getByRole('heading', { name: 'Rig OV-03' }).first()).toBeVisible();
    await expect(page.getByTestId('socket-board')).toBeVisible();
    await expect(page.getByRole('button', { name: /^Socket 0, D\d{4}, case -?\d+\.\d °C, bias (on|off)$/ })).toBeVisible();
    const legend = page.getByTestId('temp-legend');
    await expect(legend).toContainText(/case temperature, °C/i);
    await expect(legend).toContainText('Hatched + “TRIP”: bias removed and latched');
    await expect(page.getByTestId('rig-chart')).toBeVisible(20000);
    await page.getByRole('button', { name: /^Socket 5, / }).click();
    await expect(page.getByTestId('socket-detail')).toContainText('Socket 5');
    await expect(page.getByTestId('socket-detail')).toContainText(/Case temperature\s+-?\d+\.\d °C/);
    await j.checkA11y('rig page');
    await j.shot('rig-board');
    await page.getByTestId('rig-chart').scrollIntoViewIfNeeded();
    await j.shot('rig-chart');

    // --- Socket loading of the run being loaded: flags before anything is stored -----------
    await j.navTo('Schedule');
    await page.waitForURL((u) => u.pathname === '/schedule');
    await page.getByRole('button', { name: 'Open run IOL-2605-H' }).click();
    await page.waitForURL((u) => u.pathname.startsWith('/runs/'));
    await expect(page.getByRole('heading', { name: 'IOL-2605-H' }).first()).toBeVisible();
    await expect(page.getByText('20 of 32 sockets loaded. Start once every device is placed.')).toBeVisible();
    const start = page.getByRole('button', { name: 'Start', exact: true });
    await expect(start).toBeVisible();
    if ((await start.getAttribute('aria-disabled')) !== 'true') throw new Error('Start is offered before every socket is loaded');
    // Serials of the lot as the socket map shows them; then one blank line and one repeat.
    await expect(page.getByText('H0001', { exact: true }).first()).toBeVisible();
    const column = [...Array.from({ length: 21 }, (_, i) => `H${String(i + 1).padStart(4, '0')}`), '', 'H0022', 'H0021'].join('\n');
    await page.getByLabel('Serials', { exact: true }).fill(column);
    await expect(page.getByText('24 lines → sockets 0–23. The run needs 32 devices.')).toBeVisible();
    await page.getByRole('button', { name: 'Check', exact: true }).click();
    const flags = page.getByTestId('socket-flags');
    await expect(flags).toBeVisible();
    await expect(flags.getByText('Socket 21 · Empty')).toBeVisible();
    await expect(flags.getByText('Socket 21 is left empty.')).toBeVisible();
    await expect(flags.getByText('Socket 23 · Duplicate')).toBeVisible();
    await expect(flags.getByText('Serial H0021 is in socket 20 already; one device cannot sit in two sockets.')).toBeVisible();
    await expect(flags).toContainText('1 socket needs attention before this map can be stored');
    // Nothing was stored: still 20 of 32.
    await expect(page.getByText('20 of 32 sockets loaded. Start once every device is placed.')).toBeVisible();
    await j.checkA11y('run loading flags');
    await flags.scrollIntoViewIfNeeded();
    await j.shot('socket-loading-flags');

    // --- Alarms: a runaway trip, acknowledged with a note ---------------------------------
    // The demo fleet dries out the thermal pads of two OV-03 sockets (5 and 11); protection trips
    // each before its junction reaches Tj max. The phone run acknowledges one, the wide run the other.
    await j.navTo('Alarms');
    await page.waitForURL((u) => u.pathname === '/alarms');
    await expect(page.getByRole('heading', { name: 'Alarms' }).first()).toBeVisible();
    await expect(page.getByTestId('alarm-summary')).toContainText(/^\d+ open alarms?: \d+ critical/);
    await page.getByRole('radio', { name: 'Critical', exact: true }).click();
    const ackButton = page.getByRole('button', { name: /^Acknowledge Socket \d+ on [A-Z]{2}-\d\d tripped: runaway$/ }).first();
    await expect(ackButton).toBeVisible(120000); // the demo's failing heat sinks need a minute or two of stress
    const alarmTitle = ((await ackButton.getAttribute('aria-label')) ?? '').replace(/^Acknowledge /, '');
    await expect(page.getByRole('heading', { name: alarmTitle }).first()).toBeVisible();
    await j.checkA11y('alarms');
    await j.shot('alarms');
    await ackButton.click();
    const dialog = page.getByRole('dialog');
    await expect(dialog.getByText(`Acknowledge: ${alarmTitle}`)).toBeVisible();
    const note = `Socket left off; heat sink clamp checked (${j.size} journey).`;
    await dialog.getByLabel('Note', { exact: true }).fill(note);
    await j.checkA11y('acknowledge dialog');
    await j.shot('acknowledge-dialog');
    await dialog.getByRole('button', { name: 'Acknowledge', exact: true }).click();
    await expect(page.getByRole('dialog')).toHaveCount(0, 15000);
    // The confirmation says who and when; the alarm leaves the open list at once.
    const ackNotice = page.getByTestId('alarm-ack-notice');
    await expect(ackNotice).toContainText(
      new RegExp(`^Acknowledged by Priya Castell on \\d{4}-\\d{2}-\\d{2} \\d{2}:\\d{2}: ${alarmTitle.replace(/[().+]/g, '\\$&')}\\.`),
    );
    await expect(page.getByRole('button', { name: `Acknowledge ${alarmTitle}`, exact: true })).toHaveCount(0, 10000);
    // It now sits under "Acknowledged" with the note and who wrote it.
    await page.getByRole('radio', { name: 'Acknowledged', exact: true }).click();
    await expect(
      page.getByText(new RegExp(`^Acknowledged by Priya Castell on .*: “${note.replace(/[().]/g, '\\$&')}”$`)).first(),
    ).toBeVisible();
    await j.shot('alarm-acknowledged');

    // --- Read points: a tester's CSV with one bad row -------------------------------------
    const board = (await (await page.request.get(`${j.baseUrl}/api/floor/rigs/OV-03`)).json()) as {
      sockets: Array<{ serial: string | null }>;
    };
    const serials = board.sockets
      .map((s) => s.serial)
      .filter((s): s is string => !!s)
      .slice(0, 3);
    if (serials.length < 3) throw new Error('OV-03 has fewer than three loaded sockets');
    const csv = [
      // Units in the headers (issue #23 item 4): ICBO in nA, the rest in A and V.
      'serial,hfe,hfe_ic_a,hfe_vce_v,icbo_na,icbo_vcb_v,vcesat_v',
      `${serials[0]},72.1,1,5,35,80,0.42`,
      `${serials[1]},70.3,1,5,41,80,0.45`,
      `${serials[2]},abc,1,5,38,80,0.44`,
    ].join('\n');
    await j.navTo('Read points');
    await page.waitForURL((u) => u.pathname === '/readings');
    await expect(page.getByRole('heading', { name: 'Read points' }).first()).toBeVisible();
    await page.getByRole('radio', { name: /^HOTL-2609-D-2 · HG2609-D · / }).click();
    await page.getByRole('radio', { name: /^0 h · \d+\/40 stored/ }).click();
    await expect(page.getByTestId('upload-panel')).toBeVisible();
    await page
      .getByTestId('csv-file-input')
      .setInputFiles({ name: `read-point-0h-${j.size}.csv`, mimeType: 'text/csv', buffer: Buffer.from(csv) });
    await expect(page.getByText(`read-point-0h-${j.size}.csv`)).toBeVisible();
    await expect(page.getByTestId('column-summary')).toContainText('Serial ← serial');
    await page.getByTestId('upload-preview').click();
    const preview = page.getByTestId('upload-preview-result');
    await expect(preview).toBeVisible();
    await expect(preview).toContainText(/3 rows: 2 new, 0 replace a stored reading, 0 already stored, 1 refused/);
    await expect(preview.getByRole('radio', { name: 'Problems (1)' })).toBeVisible();
    const rows = page.getByTestId('upload-preview-rows');
    await expect(rows).toContainText(serials[2]);
    await expect(rows).toContainText('Refused');
    await expect(rows).toContainText('hfe "abc" is not a number.');
    await expect(page.getByTestId('upload-store')).toContainText('Store 2 readings');
    await j.checkA11y('read-point upload');
    await preview.scrollIntoViewIfNeeded();
    await j.shot('read-point-bad-row');
  },
};
