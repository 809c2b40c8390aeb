/**
 * E-mail: the MailService against the local fake SMTP server (sent, refused, unreachable — each
 * logged once in mail_log, never a crash), the admin's mail log API, and the sink's standalone
 * process (server/mail-sink/main.ts) printing its "listening" line and saving .eml files.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import nodemailer from 'nodemailer';
import { MailLogEntity } from '../../server/db/entities';
import { decodeEncodedWords, readPlainText, startMailSink, type MailSink } from '../../server/mail-sink/mail-sink';
import { MailService } from '../../server/modules/mail/mail.service';
import { createTestApp, type TestApp } from '../support/api';

let t: TestApp;
let sink: MailSink;
let mail: MailService;

beforeAll(async () => {
  sink = await startMailSink({ port: 0 });
  t = await createTestApp(
    { smtp: { host: '127.0.0.1', port: sink.port, from: 'Emberlot <emberlot@harrowgate-lab.example>' } },
    { mail: { attempts: 3, backoffMs: 10, timeoutMs: 2000 } },
  );
  mail = t.ctx.services.mail;
});
afterAll(async () => {
  await mail?.close();
  await t?.close();
  await sink?.close();
});

describe('MailService', () => {
  it('sends through SMTP to the sink and logs the message as sent', async () => {
    const row = await mail.sendNow({
      to: 'operator@harrowgate-lab.example',
      subject: '[Emberlot] Critical: Socket tripped: runaway (rig OV-03, socket 5)',
      text: 'Junction estimate 141.2 °C against a rating of 150.0 °C.\nLeave the socket de-energised.',
      kind: 'runaway-trip',
    });
    expect(row).toEqual(
      expect.objectContaining({ status: 'sent', error: null, kind: 'runaway-trip', toAddress: 'operator@harrowgate-lab.example' }),
    );
    const got = await sink.waitFor((m) => m.to.includes('operator@harrowgate-lab.example'));
    expect(got.subject).toBe('[Emberlot] Critical: Socket tripped: runaway (rig OV-03, socket 5)');
    expect(got.text).toContain('Junction estimate 141.2 °C against a rating of 150.0 °C.');
    expect(got.from).toBe('emberlot@harrowgate-lab.example');
    expect(row!.messageId).toBe(got.headers['message-id']);
  });

  it('a refusing server: retried, then logged once as failed with the error; later mail goes through again', async () => {
    sink.setRefuse(true);
    const before = sink.messages.length;
    const row = await mail.sendNow({ to: 'engineer@harrowgate-lab.example', subject: 'Refused', text: 'x', kind: 'runaway-warning' });
    expect(row?.status).toBe('failed');
    expect(row?.error).toMatch(/After 3 attempts: .*450/);
    expect(sink.messages.length).toBe(before);
    expect(mail.stats.retries).toBeGreaterThanOrEqual(2);
    sink.setRefuse(false);
    const ok = await mail.sendNow({ to: 'engineer@harrowgate-lab.example', subject: 'Accepted', text: 'y', kind: 'runaway-warning' });
    expect(ok?.status).toBe('sent');
  });

  it('no server at all: the queue drains, each message logged as failed, nothing thrown', async () => {
    // The same database, a mail server address where nothing listens (port 9, discard).
    const downCtx = { ...t.ctx, config: { ...t.ctx.config, smtp: { ...t.ctx.config.smtp, port: 9 } } };
    const m = new MailService(downCtx, { attempts: 2, backoffMs: 5, timeoutMs: 1000 });
    m.enqueue({ to: 'a@harrowgate-lab.example', subject: 'One', text: '1', kind: 'rig-offline' });
    m.enqueue({ to: 'b@harrowgate-lab.example', subject: 'Two', text: '2', kind: 'rig-offline' });
    await m.idle();
    const rows = await t.ctx.ds.getRepository(MailLogEntity).find({ where: { kind: 'rig-offline' }, order: { toAddress: 'ASC' } });
    expect(rows.map((r) => [r.toAddress, r.status])).toEqual([
      ['a@harrowgate-lab.example', 'failed'],
      ['b@harrowgate-lab.example', 'failed'],
    ]);
    expect(rows[0].error).toMatch(/ECONNREFUSED|connect/i);
    await m.close();
  });
});

describe('GET /api/mail', () => {
  it('admin sees the log, newest first, with totals; filters by status', async () => {
    const admin = await t.signIn('admin');
    const res = await admin.get('/api/mail');
    expect(res.status).toBe(200);
    expect(res.body.total).toBe(5);
    expect(res.body.sent).toBe(2);
    expect(res.body.failed).toBe(3);
    expect(res.body.items.map((m: { subject: string }) => m.subject)).toEqual([
      'Two',
      'One',
      'Accepted',
      'Refused',
      expect.stringMatching(/^\[Emberlot\] Critical/),
    ]);
    const failed = await admin.get('/api/mail?status=failed');
    expect(failed.body.items.map((m: { subject: string }) => m.subject)).toEqual(['Two', 'One', 'Refused']);
    expect(failed.body.items[2].error).toMatch(/450/);
    expect((await admin.get('/api/mail?status=lost')).status).toBe(400);
  });

  it.each(['operator', 'engineer', 'manager'] as const)('%s is refused (403)', async (role) => {
    const res = await (await t.signIn(role)).get('/api/mail');
    expect(res.status).toBe(403);
  });
});

describe('mail sink', () => {
  it('decodes encoded-word subjects and quoted-printable bodies', () => {
    expect(decodeEncodedWords('=?UTF-8?Q?Tj_141=C2=B0C?=')).toBe('Tj 141°C');
    expect(decodeEncodedWords('=?UTF-8?B?VGogMTQxwrBD?=')).toBe('Tj 141°C');
    const raw =
      'Subject: x\r\nContent-Type: text/plain; charset=utf-8\r\nContent-Transfer-Encoding: quoted-printable\r\n\r\n141.2 =C2=B0C, a very long line that goes on=\r\n and on';
    expect(readPlainText(raw).text).toBe('141.2 °C, a very long line that goes on and on');
  });

  it('runs standalone: prints one "listening" line, saves each message as .eml, stops on SIGTERM', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'emberlot-mail-'));
    const root = path.resolve(__dirname, '..', '..');
    const child: ChildProcess = spawn(process.execPath, ['-r', '@swc-node/register', path.join(root, 'server/mail-sink/main.ts')], {
      cwd: root,
      env: { ...process.env, SWC_NODE_PROJECT: 'server/tsconfig.json', EMBERLOT_SMTP_PORT: '0', EMBERLOT_MAIL_DIR: dir },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    try {
      const line = await new Promise<string>((resolve, reject) => {
        let out = '';
        child.stdout!.on('data', (c: Buffer) => {
          out += c.toString();
          const hit = out.split('\n').find((l) => /listening on/.test(l));
          if (hit) resolve(hit);
        });
        child.on('exit', (code) => reject(new Error(`mail sink exited early (${code}): ${out}`)));
      });
      expect(line).toMatch(/^\[mail-sink\] listening on smtp:\/\/127\.0\.0\.1:\d+/);
      const port = Number(/:(\d+),/.exec(line)![1]);
      const transport = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true });
      await transport.sendMail({
        from: 'emberlot@harrowgate-lab.example',
        to: 'admin@harrowgate-lab.example',
        subject: 'Standalone check',
        text: 'Hello from the test.',
      });
      transport.close();
      const files = fs.readdirSync(dir).filter((f) => f.endsWith('.eml'));
      expect(files).toHaveLength(1);
      expect(fs.readFileSync(path.join(dir, files[0]), 'utf8')).toMatch(/Subject: Standalone check/);
    } finally {
      const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
      child.kill('SIGTERM');
      expect(await exited).toBe(0);
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }, 20_000);
});
