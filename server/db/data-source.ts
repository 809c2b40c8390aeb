import 'reflect-metadata';
import * as path from 'node:path';
import { DataSource } from 'typeorm';
import type { DbConfig } from '../config';
import { dbConfigFromEnv } from '../config';
import { ENTITIES } from './entities';
import { SnakeNamingStrategy } from './naming';
import { ParameterFreeLogger } from './safe-logger';
import { withSecrets } from '../secrets';

export function createDataSource(db: DbConfig, opts: { runMigrations?: boolean; poolSize?: number } = {}): DataSource {
  return new DataSource({
    type: 'postgres',
    host: db.host,
    port: db.port,
    username: db.user,
    password: db.password,
    database: db.database,
    entities: ENTITIES,
    migrations: [path.join(__dirname, 'migrations', '*.{ts,js}')],
    migrationsRun: opts.runMigrations ?? true,
    migrationsTransactionMode: 'each',
    synchronize: false,
    namingStrategy: new SnakeNamingStrategy(),
    uuidExtension: 'pgcrypto',
    installExtensions: false,
    extra: { max: opts.poolSize ?? 20 },
    logging: ['error'],
    logger: new ParameterFreeLogger(),
  });
}

/** The generated secrets file, read only (never created) and only when it can be read. */
function cliEnv(): NodeJS.ProcessEnv {
  try {
    return { ...process.env, ...withSecrets(process.env, { create: false }).env };
  } catch {
    return process.env;
  }
}

/** Used by the TypeORM CLI (migration:generate) only: the demo cluster's generated password. */
export default createDataSource(dbConfigFromEnv(cliEnv()), { runMigrations: false });
