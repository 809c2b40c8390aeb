/**
 * The fake SMTP process `npm start` supervises: accepts mail on 127.0.0.1:EMBERLOT_SMTP_PORT
 * (default 2526) and saves each message as an .eml file under EMBERLOT_MAIL_DIR (default
 * .data/mail). Nothing leaves the machine. Prints one "listening on" line when ready.
 *
 *   SWC_NODE_PROJECT=server/tsconfig.json node -r @swc-node/register server/mail-sink/main.ts
 */
import * as path from 'node:path';
import { startMailSink } from './mail-sink';

async function main(): Promise<void> {
  const raw = process.env.EMBERLOT_SMTP_PORT;
  const port = raw && /^\d+$/.test(raw) ? Number(raw) : 2526;
  const dir = path.resolve(process.env.EMBERLOT_MAIL_DIR ?? path.join(__dirname, '..', '..', '.data', 'mail'));
  const sink = await startMailSink({ port, host: '127.0.0.1', dir });
  console.log(`[mail-sink] listening on smtp://127.0.0.1:${sink.port}, saving messages to ${dir}`);
  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    await sink.close();
    console.log(`[mail-sink] ${signal}: stopped after ${sink.messages.length} message(s) this session`);
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
}

main().catch((err) => {
  console.error(`[mail-sink] could not start: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
