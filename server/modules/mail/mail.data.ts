/** The mail log's query-builder SQL, apart from mail.service.ts. */
import type { EntityManager } from 'typeorm';
import { MailLogEntity } from '../../db/entities';

/** How many logged e-mails have each status. */
export function mailStatusCounts(m: EntityManager): Promise<Array<{ status: string; n: number }>> {
  return m
    .getRepository(MailLogEntity)
    .createQueryBuilder('m')
    .select('m.status', 'status')
    .addSelect('count(*)::int', 'n')
    .groupBy('m.status')
    .getRawMany();
}
