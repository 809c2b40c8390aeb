/** The health check's one statement. */
import type { DataSource } from 'typeorm';

export async function pingDatabase(ds: DataSource): Promise<void> {
  await ds.query('SELECT 1');
}
