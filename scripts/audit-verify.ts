import 'reflect-metadata';
import { dbConfigFromEnv } from '../server/config';
import { createDataSource } from '../server/db/data-source';
import { AuditService } from '../server/modules/audit/audit.service';
import { withSecrets } from '../server/secrets';

/**
 * `npm run audit:verify`: walks the audit log's hash chain (server/modules/audit/audit-chain.ts)
 * in the database the environment names (the demo database by default) and exits 1 at the first
 * entry that was edited, inserted or removed outside the application. Last line: one JSON object.
 */
export async function auditVerify(env: NodeJS.ProcessEnv): Promise<number> {
  const ds = createDataSource(dbConfigFromEnv(withSecrets(env).env), { runMigrations: false });
  await ds.initialize();
  try {
    const report = await new AuditService(ds).verify();
    if (report.ok) console.log(`[audit:verify] ${report.checked} entries, chain intact`);
    else console.log(`[audit:verify] chain broken after ${report.checked} good entries: ${report.firstBreak!.problem}`);
    console.log(JSON.stringify(report));
    return report.ok ? 0 : 1;
  } finally {
    await ds.destroy();
  }
}

if (require.main === module) {
  auditVerify(process.env).then(
    (code) => process.exit(code),
    (e: unknown) => {
      console.error(`[audit:verify] could not read the audit log: ${e instanceof Error ? e.message : String(e)}`);
      process.exit(2);
    },
  );
}
