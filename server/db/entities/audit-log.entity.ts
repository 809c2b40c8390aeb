import { Column, Entity, Index, PrimaryGeneratedColumn } from 'typeorm';

/** Who did what, when and why. Append-only. */
@Entity('audit_log')
@Index(['entity', 'entityId'])
export class AuditLogEntity {
  @PrimaryGeneratedColumn('increment', { type: 'bigint' }) id: string;
  @Index() @Column({ type: 'timestamptz', default: () => 'now()' }) at: Date;
  @Column({ type: 'uuid', nullable: true }) actorId: string | null;
  /** "system" for the scheduler and protection. */
  @Column({ type: 'varchar', length: 254 }) actor: string;
  @Column({ type: 'varchar', length: 64 }) action: string;
  @Column({ type: 'varchar', length: 32 }) entity: string;
  @Column({ type: 'varchar', length: 64, nullable: true }) entityId: string | null;
  @Column({ type: 'text', nullable: true }) reason: string | null;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- TypeORM's insert/update typing cannot take `unknown` inside a jsonb column
  @Column({ type: 'jsonb', default: () => "'{}'" }) details: Record<string, any>;
  /** The hash of the entry before this one (null for the first): the chain (audit-chain.ts). */
  @Column({ type: 'char', length: 64, nullable: true }) prevHash: string | null;
  /** SHA-256 of the previous hash and this entry's canonical JSON. */
  @Column({ type: 'char', length: 64, nullable: true }) hash: string | null;
}
