import { Column, CreateDateColumn, Entity, Index, PrimaryGeneratedColumn } from 'typeorm';
import type { AlarmKindName, AlarmSeverityName } from '../../../shared/schemas/alarms';

/** The kinds and severities are defined once, in shared/schemas/alarms.ts. */
export type AlarmKind = AlarmKindName;
export type AlarmSeverity = AlarmSeverityName;

@Entity('alarms')
@Index(['acknowledgedAt', 'raisedAt'])
export class AlarmEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'varchar', length: 32 }) kind: AlarmKind;
  @Column({ type: 'varchar', length: 12 }) severity: AlarmSeverity;
  @Index() @Column({ type: 'uuid', nullable: true }) rigId: string | null;
  @Index() @Column({ type: 'uuid', nullable: true }) runId: string | null;
  @Column({ type: 'int', nullable: true }) socketIndex: number | null;
  @Column({ type: 'varchar', length: 200 }) title: string;
  /** Plain-language message with the numbers and what to do. */
  @Column({ type: 'text' }) message: string;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- TypeORM's insert/update typing cannot take `unknown` inside a jsonb column
  @Column({ type: 'jsonb', default: () => "'{}'" }) details: Record<string, any>;
  /** Only one open alarm per key (kind + rig + socket): repeats update it instead of piling up. */
  @Index() @Column({ type: 'varchar', length: 120 }) dedupeKey: string;
  @CreateDateColumn({ type: 'timestamptz' }) raisedAt: Date;
  @Column({ type: 'timestamptz', nullable: true }) acknowledgedAt: Date | null;
  @Column({ type: 'uuid', nullable: true }) acknowledgedById: string | null;
  @Column({ type: 'text', nullable: true }) ackNote: string | null;
  @Column({ type: 'timestamptz', nullable: true }) clearedAt: Date | null;
}

@Entity('notifications')
@Index(['userId', 'readAt'])
export class NotificationEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) userId: string;
  @Column({ type: 'varchar', length: 32 }) kind: string;
  @Column({ type: 'varchar', length: 200 }) title: string;
  @Column({ type: 'text' }) body: string;
  @Column({ type: 'varchar', length: 200, nullable: true }) link: string | null;
  @Column({ type: 'timestamptz', nullable: true }) readAt: Date | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

/** Every e-mail Emberlot sent (or failed to send), for the admin's mail log. */
@Entity('mail_log')
export class MailLogEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'varchar', length: 254 }) toAddress: string;
  @Column({ type: 'varchar', length: 200 }) subject: string;
  @Column({ type: 'text' }) body: string;
  @Column({ type: 'varchar', length: 32 }) kind: string;
  @Column({ type: 'varchar', length: 8 }) status: 'sent' | 'failed';
  @Column({ type: 'text', nullable: true }) error: string | null;
  @Column({ type: 'varchar', length: 200, nullable: true }) messageId: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}
