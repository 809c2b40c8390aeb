/**
 * The local fake SMTP server: accepts every message on 127.0.0.1 (no TLS, no auth — loopback only)
 * and keeps it, in memory and optionally as an .eml file per message. Nothing is ever relayed.
 * Used by `npm start` (server/mail-sink/main.ts) and by tests (`startMailSink({ port: 0 })`).
 */
import * as fs from 'node:fs';
import type { AddressInfo } from 'node:net';
import * as path from 'node:path';
import { SMTPServer } from 'smtp-server';

export interface SinkMessage {
  /** Sequence number in this sink, from 1. */
  n: number;
  receivedAt: Date;
  /** SMTP envelope. */
  from: string;
  to: string[];
  /** Decoded Subject header. */
  subject: string;
  /** Decoded text/plain body (or the whole body when the message is not multipart). */
  text: string;
  headers: Record<string, string>;
  raw: string;
  /** The .eml file, when the sink writes files. */
  file: string | null;
}

export interface MailSinkOptions {
  port?: number;
  host?: string;
  /** Folder for .eml files (created). Omit to keep messages in memory only. */
  dir?: string | null;
  /** Messages kept in memory (oldest dropped first). */
  keep?: number;
  /** Largest accepted message, bytes. */
  maxBytes?: number;
  /** Refuse every message with this SMTP error (tests of the sender's retries). */
  refuse?: boolean;
}

export interface MailSink {
  readonly host: string;
  readonly port: number;
  readonly messages: SinkMessage[];
  /** Refuse (true) or accept (false) messages from now on. */
  setRefuse(refuse: boolean): void;
  /** Resolves with the first stored message matching `pred` (already there or arriving later). */
  waitFor(pred: (m: SinkMessage) => boolean, timeoutMs?: number): Promise<SinkMessage>;
  close(): Promise<void>;
}

// ---------------------------------------------------------------------------------------------
// Minimal MIME reading: enough for the plain-text mail Emberlot sends (nodemailer output).

function unfoldHeaders(block: string): Record<string, string> {
  const out: Record<string, string> = {};
  const lines = block.split(/\r?\n/);
  let current = '';
  const flush = () => {
    const k = current.indexOf(':');
    if (k > 0) out[current.slice(0, k).trim().toLowerCase()] = current.slice(k + 1).trim();
  };
  for (const line of lines) {
    if (/^[ \t]/.test(line)) current += ' ' + line.trim();
    else {
      if (current) flush();
      current = line;
    }
  }
  if (current) flush();
  return out;
}

function decodeQuotedPrintable(s: string): Buffer {
  const soft = s.replace(/=\r?\n/g, '');
  const bytes: number[] = [];
  for (let k = 0; k < soft.length; k++) {
    const c = soft[k];
    if (c === '=' && /^[0-9A-Fa-f]{2}$/.test(soft.slice(k + 1, k + 3))) {
      bytes.push(parseInt(soft.slice(k + 1, k + 3), 16));
      k += 2;
    } else bytes.push(...Buffer.from(c, 'utf8'));
  }
  return Buffer.from(bytes);
}

/** RFC 2047 encoded words (=?UTF-8?Q?…?= / =?UTF-8?B?…?=). */
export function decodeEncodedWords(v: string): string {
  return v
    .replace(/\?=\s+=\?/g, '?==?')
    .replace(/=\?([^?]+)\?([QqBb])\?([^?]*)\?=/g, (_m, _cs: string, enc: string, text: string) =>
      enc.toUpperCase() === 'B'
        ? Buffer.from(text, 'base64').toString('utf8')
        : decodeQuotedPrintable(text.replace(/_/g, ' ')).toString('utf8'),
    );
}

function decodeBody(body: string, encoding: string | undefined): string {
  const e = (encoding ?? '').toLowerCase();
  if (e === 'quoted-printable') return decodeQuotedPrintable(body).toString('utf8');
  if (e === 'base64') return Buffer.from(body.replace(/\s+/g, ''), 'base64').toString('utf8');
  return body;
}

function splitMessage(raw: string): { headers: Record<string, string>; body: string } {
  const m = /\r?\n\r?\n/.exec(raw);
  if (!m) return { headers: unfoldHeaders(raw), body: '' };
  return { headers: unfoldHeaders(raw.slice(0, m.index)), body: raw.slice(m.index + m[0].length) };
}

/** The text/plain part of a message (first one in a multipart), decoded. */
export function readPlainText(raw: string): { headers: Record<string, string>; text: string } {
  const { headers, body } = splitMessage(raw);
  const type = headers['content-type'] ?? 'text/plain';
  const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1];
  if (/^multipart\//i.test(type) && boundary) {
    const parts = body.split(`--${boundary}`).slice(1);
    for (const part of parts) {
      if (part.startsWith('--')) break;
      const inner = readPlainText(part.replace(/^\r?\n/, ''));
      const innerType = splitMessage(part.replace(/^\r?\n/, '')).headers['content-type'] ?? 'text/plain';
      if (/^text\/plain/i.test(innerType) || /^multipart\//i.test(innerType)) return { headers, text: inner.text };
    }
    return { headers, text: '' };
  }
  return { headers, text: decodeBody(body, headers['content-transfer-encoding']).replace(/\r\n/g, '\n').trimEnd() };
}

// ---------------------------------------------------------------------------------------------

export async function startMailSink(opts: MailSinkOptions = {}): Promise<MailSink> {
  const host = opts.host ?? '127.0.0.1';
  const keep = opts.keep ?? 1000;
  const dir = opts.dir ?? null;
  if (dir) fs.mkdirSync(dir, { recursive: true });
  const messages: SinkMessage[] = [];
  const waiters: Array<{ pred: (m: SinkMessage) => boolean; resolve: (m: SinkMessage) => void }> = [];
  let refuse = opts.refuse ?? false;
  let n = 0;

  const server = new SMTPServer({
    secure: false,
    authOptional: true,
    disabledCommands: ['AUTH', 'STARTTLS'],
    hideSTARTTLS: true,
    logger: false,
    banner: 'Emberlot local mail sink (nothing is relayed)',
    size: opts.maxBytes ?? 5 * 1024 * 1024,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('error', (err) => callback(err));
      stream.on('end', () => {
        if (refuse) {
          const err = new Error('Mailbox unavailable (the sink is refusing mail)') as Error & { responseCode: number };
          err.responseCode = 450;
          return callback(err);
        }
        if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
          const err = new Error('Message too large') as Error & { responseCode: number };
          err.responseCode = 552;
          return callback(err);
        }
        const raw = Buffer.concat(chunks).toString('utf8');
        const { headers, text } = readPlainText(raw);
        n += 1;
        let file: string | null = null;
        if (dir) {
          const stamp = new Date().toISOString().replace(/[:.]/g, '-');
          file = path.join(dir, `${stamp}-${String(n).padStart(5, '0')}.eml`);
          try {
            fs.writeFileSync(file, raw);
          } catch {
            file = null;
          }
        }
        const msg: SinkMessage = {
          n,
          receivedAt: new Date(),
          from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
          to: session.envelope.rcptTo.map((r) => r.address),
          subject: decodeEncodedWords(headers['subject'] ?? ''),
          text,
          headers,
          raw,
          file,
        };
        messages.push(msg);
        if (messages.length > keep) messages.shift();
        for (const w of [...waiters]) {
          if (w.pred(msg)) {
            waiters.splice(waiters.indexOf(w), 1);
            w.resolve(msg);
          }
        }
        callback(null, `Stored as message ${n}`);
      });
    },
  });
  server.on('error', (err) => {
    // A broken client connection must never take the sink down.
    if (process.env.EMBERLOT_MAIL_SINK_LOG === '1') console.error('[mail-sink] error:', err.message);
  });

  await new Promise<void>((resolve, reject) => {
    const onError = (err: Error) => reject(err);
    server.server.once('error', onError);
    server.listen(opts.port ?? 2526, host, () => {
      server.server.off('error', onError);
      resolve();
    });
  });
  const port = (server.server.address() as AddressInfo).port;

  return {
    host,
    port,
    messages,
    setRefuse(v) {
      refuse = v;
    },
    waitFor(pred, timeoutMs = 10_000) {
      const hit = messages.find(pred);
      if (hit) return Promise.resolve(hit);
      return new Promise<SinkMessage>((resolve, reject) => {
        const w = {
          pred,
          resolve: (m: SinkMessage) => {
            clearTimeout(t);
            resolve(m);
          },
        };
        const t = setTimeout(() => {
          waiters.splice(waiters.indexOf(w), 1);
          reject(new Error('No matching message arrived at the mail sink'));
        }, timeoutMs);
        waiters.push(w);
      });
    },
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
