import { Column, CreateDateColumn, Entity, Index, JoinColumn, ManyToOne, PrimaryGeneratedColumn } from 'typeorm';
import type { QualGroup, QualPlanKind, QualTemplateKey } from '../../../shared/qualification/templates';
import { LotEntity } from './lot.entity';

/**
 * A qualification: a device type (or a family of them, on the generic-data rule the engineer
 * states) taken through the stress groups of a template, several lots each.
 */
@Entity('qualifications')
export class QualificationEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'varchar', length: 40, unique: true }) code: string;
  @Column({ type: 'varchar', length: 160 }) name: string;
  @Column({ type: 'varchar', length: 24 }) templateKey: QualTemplateKey;
  /** The template's groups as they were when the qualification was made (a later template edit does not move it). */
  @Column({ type: 'jsonb' }) groups: QualGroup[];
  @Column({ type: 'jsonb' }) deviceTypeIds: string[];
  /** Lots in the order chosen: a group asking for N lots uses the first N. */
  @Column({ type: 'jsonb' }) lotIds: string[];
  /** For a family: the engineer's rule for which data stands for which device type. */
  @Column({ type: 'text', default: '' }) familyRule: string;
  @Column({ type: 'uuid', nullable: true }) createdById: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

/** One stress group on one lot. Its runs are the runs of its plan kind on its lot (found, not stored). */
@Entity('qualification_cells')
@Index('IDX_qualification_cells_group_lot', ['qualificationId', 'groupKey', 'lotId'], { unique: true })
export class QualificationCellEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Index('IDX_qualification_cells_qualification') @Column({ type: 'uuid' }) qualificationId: string;
  @ManyToOne(() => QualificationEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'qualification_id' })
  qualification?: QualificationEntity;
  @Column({ type: 'varchar', length: 24 }) groupKey: string;
  @Index('IDX_qualification_cells_lot') @Column({ type: 'uuid' }) lotId: string;
  @ManyToOne(() => LotEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'lot_id' })
  lot?: LotEntity;
  @Column({ type: 'int' }) position: number;
  @Column({ type: 'varchar', length: 8, nullable: true }) planKind: QualPlanKind | null;
  @Column({ type: 'int' }) plannedSample: number;
  @Column({ type: 'int' }) acceptNumber: number;
  @Column({ type: 'text', nullable: true }) waiverReason: string | null;
  @Column({ type: 'uuid', nullable: true }) waivedById: string | null;
  @Column({ type: 'timestamptz', nullable: true }) waivedAt: Date | null;
  /** A group with no run kind (ESD, DPA, …): the result recorded from outside. */
  @Column({ type: 'varchar', length: 4, nullable: true }) externalResult: 'pass' | 'fail' | null;
  @Column({ type: 'varchar', length: 120, nullable: true }) externalBy: string | null;
  @Column({ type: 'timestamptz', nullable: true }) externalAt: Date | null;
  @Column({ type: 'varchar', length: 200, nullable: true }) externalDocument: string | null;
  @Column({ type: 'uuid', nullable: true }) externalRecordedById: string | null;
}

/** What a withdrawn waiver or outside result said, kept when the cell's record is cleared (with the audit entry). */
export interface WithdrawnRecord {
  /** Waiver: its reason; outside result: pass / fail, by, document. */
  text: string;
  by: string;
  at: string;
}

/** A waiver or outside result withdrawn from a cell: the cell returns to the state its runs give it. */
@Entity('qualification_cell_withdrawals')
export class QualificationCellWithdrawalEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) qualificationId: string;
  @Index('IDX_qualification_cell_withdrawals_cell') @Column({ type: 'uuid' }) cellId: string;
  @ManyToOne(() => QualificationCellEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'cell_id' })
  cell?: QualificationCellEntity;
  @Column({ type: 'varchar', length: 8 }) record: 'waiver' | 'external';
  @Column({ type: 'jsonb' }) withdrawn: WithdrawnRecord;
  @Column({ type: 'text' }) reason: string;
  @Column({ type: 'uuid', nullable: true }) withdrawnById: string | null;
  @Column({ type: 'timestamptz' }) withdrawnAt: Date;
}
