import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';
import type { Role } from '../../../shared/roles';

@Entity('users')
export class UserEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'varchar', length: 254, unique: true }) email: string;
  @Column({ type: 'varchar', length: 120 }) name: string;
  @Column({ type: 'varchar', length: 16 }) role: Role;
  @Column({ type: 'varchar', length: 100 }) passwordHash: string;
  @Column({ type: 'boolean', default: true }) active: boolean;
  @Column({ type: 'int', default: 0 }) failedSignIns: number;
  @Column({ type: 'timestamptz', nullable: true }) lockedUntil: Date | null;
  @Column({ type: 'timestamptz', nullable: true }) lastSignInAt: Date | null;
  @Column({ type: 'boolean', default: true }) notifyAlarms: boolean;
  @Column({ type: 'boolean', default: true }) notifyReadPoints: boolean;
  /** The per-user grant to approve another person's safety override (admins grant it on People). */
  @Column({ type: 'boolean', default: false }) safetyApprover: boolean;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
  @UpdateDateColumn({ type: 'timestamptz' }) updatedAt: Date;
}
