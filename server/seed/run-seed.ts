import 'reflect-metadata';
import { dbConfigFromEnv } from '../config';
import { createDataSource } from '../db/data-source';
import { withSecrets } from '../secrets';
import { seedIfEmpty } from './seed';

/** `npm run seed`: migrate and seed the demo database if it is empty. */
(async () => {
  // The demo cluster's password is the generated one (.data/secrets.json), as npm start uses it.
  const ds = createDataSource(dbConfigFromEnv(withSecrets(process.env).env));
  await ds.initialize();
  const seeded = await seedIfEmpty(ds);
  console.log(seeded ? '[seed] demo data written' : '[seed] database already has data; nothing written');
  await ds.destroy();
})().catch((e) => {
  console.error(e);
  process.exit(1);
});
