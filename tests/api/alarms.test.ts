/**
 * Alarms API and the alarm life cycle: dedupe (one live alarm per kind + rig + socket), clearing,
 * re-activation, acknowledgement (roles, note, audit, once only), list filters and ordering, floor
 * counts; the signed-in person's notifications.
 */
import { AlarmEntity, AuditLogEntity, NotificationEntity, UserEntity } from '../../server/db/entities';
import { dedupeKeyFor, type AlarmsService, type RaiseAlarmInput } from '../../server/modules/alarms/alarms.service';
import { RunScopedAlarmKeys1796400000000 } from '../../server/db/migrations/1796400000000-RunScopedAlarmKeys';
import { randomUUID } from 'node:crypto';
import { handleRunEvent } from '../../server/modules/alarms/run-event-alarms';
import { tableCounts } from '../support/db';
import { createTestApp, emailFor, type TestApp } from '../support/api';
import { createRunFixture, type RunFixture } from '../broker/protection-fixtures';

let t: TestApp;
let svc: AlarmsService;
let a1: RunFixture;
let a2: RunFixture;

const input = (fx: RunFixture, over: Partial<RaiseAlarmInput> = {}): RaiseAlarmInput => ({
  kind: 'runaway-warning',
  severity: 'warning',
  rigId: fx.rig.id,
  runId: fx.run.id,
  socketIndex: 3,
  title: `Socket 3 on ${fx.rig.code}: runaway risk`,
  message: 'Tj 131.0 °C (max 150.0 °C) within 20 °C of the rating.',
  action: 'Watch this socket.',
  details: { tjC: 131 },
  ...over,
});

beforeAll(async () => {
  // Port 9 (discard): nothing listens, so queued e-mails fail fast and are only logged.
  t = await createTestApp(
    { smtp: { host: '127.0.0.1', port: 9, from: 'Emberlot <emberlot@harrowgate-lab.example>' } },
    { mail: { attempts: 1, timeoutMs: 1000 } },
  );
  svc = t.ctx.services.alarms;
  a1 = await createRunFixture(t.ctx.ds, { rigCode: 'AL-01', sockets: 4 });
  a2 = await createRunFixture(t.ctx.ds, { rigCode: 'AL-02', sockets: 4 });
});
afterAll(async () => {
  await t.ctx.services.mail.close();
  await t.close();
});

describe('alarm life cycle', () => {
  it('repeats update the one live alarm; a cleared, unacknowledged alarm re-activates instead of duplicating', async () => {
    const first = await svc.raise(input(a1));
    expect(first.created).toBe(true);
    const again = await svc.raise(input(a1, { message: 'Tj 134.0 °C (max 150.0 °C) within 20 °C of the rating.', details: { tjC: 134 } }));
    expect(again.created).toBe(false);
    expect(again.alarm.id).toBe(first.alarm.id);
    expect(again.alarm.details.tjC).toBe(134);
    expect(again.alarm.message).toMatch(/134\.0/);
    // Another socket or another rig is another alarm.
    expect((await svc.raise(input(a1, { socketIndex: 4 }))).created).toBe(true);
    expect((await svc.raise(input(a2))).created).toBe(true);

    const cleared = await svc.clear('runaway-warning', a1.rig.id, 3);
    expect(cleared?.active).toBe(false);
    expect(cleared?.open).toBe(true); // still needs acknowledging
    expect(await svc.clear('runaway-warning', a1.rig.id, 3)).toBeNull(); // nothing active any more

    const back = await svc.raise(input(a1));
    expect(back.created).toBe(false);
    expect(back.reactivated).toBe(true);
    expect(back.alarm.id).toBe(first.alarm.id);
    expect(back.alarm.occurrences).toBe(2);
    expect(await t.ctx.ds.getRepository(AlarmEntity).count({ where: { rigId: a1.rig.id, socketIndex: 3 } })).toBe(1);
  });

  it('acknowledged but still active: repeats keep updating it; acknowledged and cleared: the next occurrence is a new alarm', async () => {
    const { alarm } = await svc.raise(
      input(a2, { kind: 'rig-offline', severity: 'critical', socketIndex: null, title: 'Rig AL-02 is offline' }),
    );
    const op = await t.signIn('operator');
    expect((await op.post(`/api/alarms/${alarm.id}/acknowledge`).send({ note: 'Network switch rebooting, IT informed.' })).status).toBe(
      200,
    );
    const repeat = await svc.raise(
      input(a2, { kind: 'rig-offline', severity: 'critical', socketIndex: null, title: 'Rig AL-02 is offline' }),
    );
    expect(repeat.alarm.id).toBe(alarm.id);
    expect(repeat.alarm.open).toBe(false);
    await svc.clear('rig-offline', a2.rig.id, null);
    const next = await svc.raise(
      input(a2, { kind: 'rig-offline', severity: 'critical', socketIndex: null, title: 'Rig AL-02 is offline' }),
    );
    expect(next.created).toBe(true);
    expect(next.alarm.id).not.toBe(alarm.id);
  });
});

describe('GET /api/alarms', () => {
  it('lists open alarms first, most severe first, with the numbers and what to do', async () => {
    await svc.raise(input(a1, { kind: 'runaway-trip', severity: 'critical', socketIndex: 7, title: 'Socket 7 on AL-01 tripped: runaway' }));
    const res = await (await t.signIn('manager')).get('/api/alarms');
    expect(res.status).toBe(200);
    const items = res.body.items as Array<{
      severity: string;
      open: boolean;
      kind: string;
      action: string;
      rigCode: string;
      runCode: string;
    }>;
    expect(items.every((a) => a.open)).toBe(true);
    expect(items[0].severity).toBe('critical');
    const ranks = items.map((a) => ({ critical: 0, warning: 1, info: 2 })[a.severity as 'critical']);
    expect([...ranks].sort()).toEqual(ranks);
    const trip = items.find((a) => a.kind === 'runaway-trip')!;
    expect(trip.rigCode).toBe('AL-01');
    expect(trip.runCode).toBe(a1.run.code);
    expect(trip.action).toBe('Watch this socket.');
    expect(res.body.total).toBe(items.length);
  });

  it('filters by status, rig, run and severity; rejects bad filters with a clear message', async () => {
    const eng = await t.signIn('engineer');
    const acked = await eng.get('/api/alarms?status=acknowledged');
    expect(acked.body.items.every((a: { open: boolean }) => !a.open)).toBe(true);
    expect(acked.body.items.length).toBeGreaterThanOrEqual(1);
    const all = await eng.get('/api/alarms?status=all');
    const open = await eng.get('/api/alarms');
    expect(all.body.total).toBe(open.body.total + acked.body.total);
    const byRig = await eng.get(`/api/alarms?status=all&rigId=${a2.rig.id}`);
    expect(byRig.body.items.every((a: { rigId: string }) => a.rigId === a2.rig.id)).toBe(true);
    const byRun = await eng.get(`/api/alarms?status=all&runId=${a1.run.id}&severity=critical`);
    expect(byRun.body.items.map((a: { kind: string }) => a.kind)).toEqual(['runaway-trip']);
    const paged = await eng.get('/api/alarms?status=all&limit=1&offset=1');
    expect(paged.body.items).toHaveLength(1);
    const bad = await eng.get('/api/alarms?severity=disaster');
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('bad_request');
    expect(bad.body.error.fields.severity).toBeDefined();
  });

  it('GET /api/alarms/:id returns one alarm; an unknown id is 404', async () => {
    const { items } = (await (await t.signIn('operator')).get('/api/alarms')).body;
    const one = await (await t.signIn('operator')).get(`/api/alarms/${items[0].id}`);
    expect(one.status).toBe(200);
    expect(one.body.id).toBe(items[0].id);
    const missing = await (await t.signIn('operator')).get('/api/alarms/00000000-0000-4000-8000-000000000001');
    expect(missing.status).toBe(404);
    expect(missing.body.error.message).toBe('The alarm was not found.');
  });

  it('counts for the floor: open, active, by severity and by rig', async () => {
    const res = await (await t.signIn('operator')).get('/api/alarms/counts');
    expect(res.status).toBe(200);
    const open = (await (await t.signIn('operator')).get('/api/alarms?limit=500')).body.items;
    expect(res.body.open).toBe(open.length);
    expect(res.body.bySeverity.critical).toBe(open.filter((a: { severity: string }) => a.severity === 'critical').length);
    expect(res.body.active).toBe(open.filter((a: { active: boolean }) => a.active).length);
    expect(res.body.byRig[0]).toEqual(expect.objectContaining({ rigCode: 'AL-01', critical: 1 }));
  });
});

describe('POST /api/alarms/:id/acknowledge', () => {
  let id: string;
  beforeAll(async () => {
    id = (await svc.raise(input(a1, { kind: 'bias-out-of-tolerance', socketIndex: 9, title: 'Socket 9 on AL-01: bias out of tolerance' })))
      .alarm.id;
  });

  it('refuses a manager (403) and changes nothing', async () => {
    const before = await tableCounts(t.ctx.ds);
    const res = await (await t.signIn('manager')).post(`/api/alarms/${id}/acknowledge`).send({ note: 'Looks fine to me' });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/operator or engineer or admin/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('needs a note (400) and changes nothing', async () => {
    const before = await tableCounts(t.ctx.ds);
    const res = await (await t.signIn('operator')).post(`/api/alarms/${id}/acknowledge`).send({ note: ' ' });
    expect(res.status).toBe(400);
    expect(res.body.error.fields.note[0]).toMatch(/Write a short note/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const unknownField = await (
      await t.signIn('operator')
    )
      .post(`/api/alarms/${id}/acknowledge`)
      .send({ note: 'ok then', severity: 'info' });
    expect(unknownField.status).toBe(400);
  });

  it('an engineer acknowledges with a note: recorded on the alarm and in the audit log; a second acknowledgement is 409', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post(`/api/alarms/${id}/acknowledge`).send({ note: '  Supply channel 3 recalibrated.  ' });
    expect(res.status).toBe(200);
    expect(res.body).toEqual(
      expect.objectContaining({
        open: false,
        ackNote: 'Supply channel 3 recalibrated.',
        acknowledgedBy: expect.objectContaining({ name: 'Test engineer' }),
      }),
    );
    expect(typeof res.body.acknowledgedAt).toBe('string');
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).find({ where: { entityId: id } });
    expect(audit).toHaveLength(1);
    expect(audit[0]).toEqual(
      expect.objectContaining({ action: 'alarm.acknowledge', actor: emailFor('engineer'), reason: 'Supply channel 3 recalibrated.' }),
    );
    expect(audit[0].details).toEqual(expect.objectContaining({ kind: 'bias-out-of-tolerance', socketIndex: 9 }));
    const again = await (await t.signIn('admin')).post(`/api/alarms/${id}/acknowledge`).send({ note: 'Me too' });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/already acknowledged by Test engineer/);
  });

  it('an unknown alarm is 404', async () => {
    const res = await (
      await t.signIn('operator')
    )
      .post('/api/alarms/00000000-0000-4000-8000-000000000002/acknowledge')
      .send({ note: 'Checked' });
    expect(res.status).toBe(404);
  });
});

describe('/api/notifications', () => {
  it('lists only my notifications with the unread count; mark one and all read; someone else’s is 404', async () => {
    const { alarm } = await svc.raise(input(a2, { kind: 'leakage-jump', socketIndex: 1, title: 'Socket 1 on AL-02: leakage jumped ×30' }));
    const recipients = await t.ctx.services.notifications.announceAlarm(alarm);
    expect(recipients.sort()).toEqual(['admin', 'engineer', 'manager', 'operator'].map((r) => emailFor(r as 'admin')).sort());
    const op = await t.signIn('operator');
    const list = await op.get('/api/notifications');
    expect(list.status).toBe(200);
    expect(list.body.unread).toBe(1);
    expect(list.body.items[0]).toEqual(
      expect.objectContaining({
        kind: 'leakage-jump',
        title: 'Socket 1 on AL-02: leakage jumped ×30',
        link: `/alarms?id=${alarm.id}`,
        readAt: null,
      }),
    );

    const engineer = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('engineer') });
    const theirs = await t.ctx.ds.getRepository(NotificationEntity).findOneByOrFail({ userId: engineer.id });
    expect((await op.post(`/api/notifications/${theirs.id}/read`)).status).toBe(404);

    const mine = list.body.items[0].id;
    const read = await op.post(`/api/notifications/${mine}/read`);
    expect(read.status).toBe(200);
    expect(typeof read.body.readAt).toBe('string');
    expect((await op.get('/api/notifications?unread=true')).body).toEqual({ items: [], unread: 0 });

    const eng = await t.signIn('engineer');
    expect((await eng.get('/api/notifications')).body.unread).toBe(1);
    expect((await eng.post('/api/notifications/read-all')).body).toEqual({ marked: 1 });
    expect((await eng.get('/api/notifications')).body.unread).toBe(0);
  });

  it('people with alarm notices off get none', async () => {
    await t.ctx.ds.getRepository(UserEntity).update({ email: emailFor('manager') }, { notifyAlarms: false });
    const { alarm } = await svc.raise(input(a2, { kind: 'leakage-jump', socketIndex: 2, title: 'Socket 2 on AL-02: leakage jumped ×12' }));
    const recipients = await t.ctx.services.notifications.announceAlarm(alarm);
    expect(recipients).not.toContain(emailFor('manager'));
    expect(recipients).toHaveLength(3);
  });
});

describe('run-scoped alarms', () => {
  it("read-point-overdue belongs to its run: two runs on one rig give two alarms; leaving one hold clears only that run's", async () => {
    // Rig AL-01's earlier run (finished, its final read point never measured) and its present one.
    const earlierRun = randomUUID();
    const overdue = (runId: string, readPointH: number): RaiseAlarmInput =>
      input(a1, {
        kind: 'read-point-overdue',
        runId,
        socketIndex: null,
        title: `Read point ${readPointH} h not measured within 96 h`,
        details: { readPointH },
      });
    const first = await svc.raise(overdue(earlierRun, 1000));
    const second = await svc.raise(overdue(a1.run.id, 168));
    expect(first.created).toBe(true);
    expect(second.created).toBe(true); // before: merged into the first, which then named the second run
    expect(second.alarm.id).not.toBe(first.alarm.id);
    const again = await svc.raise(overdue(a1.run.id, 168));
    expect(again).toMatchObject({ created: false, alarm: { id: second.alarm.id } });

    // The present run leaves its read-hold: its alarm clears, the earlier run's stays active.
    await handleRunEvent(t.ctx, {
      type: 'state-changed',
      runId: a1.run.id,
      runCode: a1.run.code,
      rigId: a1.rig.id,
      rigCode: a1.rig.code,
      at: new Date().toISOString(),
      from: 'read-hold',
      to: 'heating',
      actor: 'operator',
      reason: null,
    });
    const rows = await t.ctx.ds.getRepository(AlarmEntity).findBy({ kind: 'read-point-overdue', rigId: a1.rig.id });
    const byRun = new Map(rows.map((r) => [r.runId, r]));
    expect(byRun.get(a1.run.id)?.clearedAt).not.toBeNull();
    expect(byRun.get(earlierRun)?.clearedAt).toBeNull();
    expect(byRun.get(earlierRun)?.details).toMatchObject({ readPointH: 1000 });
  });

  it('a read-point-overdue alarm stored under the old key is moved to its run by the migration, then updated, not duplicated', async () => {
    const fx = await createRunFixture(t.ctx.ds, { rigCode: 'AL-03', sockets: 4 });
    const repo = t.ctx.ds.getRepository(AlarmEntity);
    const raised = await svc.raise(
      input(fx, { kind: 'read-point-overdue', socketIndex: null, title: 'Read point 168 h not measured within 96 h' }),
    );
    await repo.update({ id: raised.alarm.id }, { dedupeKey: `read-point-overdue:${fx.rig.id}:-` }); // as raised before
    const runner = t.ctx.ds.createQueryRunner();
    try {
      await new RunScopedAlarmKeys1796400000000().up(runner);
    } finally {
      await runner.release();
    }
    expect((await repo.findOneByOrFail({ id: raised.alarm.id })).dedupeKey).toBe(
      dedupeKeyFor('read-point-overdue', fx.rig.id, null, fx.run.id),
    );
    const again = await svc.raise(
      input(fx, { kind: 'read-point-overdue', socketIndex: null, title: 'Read point 168 h not measured within 96 h' }),
    );
    expect(again).toMatchObject({ created: false, alarm: { id: raised.alarm.id } });
    expect(await repo.countBy({ kind: 'read-point-overdue', rigId: fx.rig.id })).toBe(1);
  });
});
