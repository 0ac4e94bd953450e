import { Column, Entity, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';
import type { SheetState } from '../schemas/score-sheets.js';
import { numericToNumber } from './numeric.js';

/**
 * One classroom's scores for one wave and measure. The scores themselves live in `scores`, written
 * in bulk by SQL; once a locked run used the sheet (`locked`), the database refuses any change.
 */
@Entity({ name: 'score_sheets' })
export class ScoreSheetEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @Column({ name: 'classroom_id', type: 'uuid' })
  classroomId!: string;

  @Column({ name: 'wave_id', type: 'uuid' })
  waveId!: string;

  @Column({ name: 'measure_id', type: 'uuid' })
  measureId!: string;

  @Column({ type: 'varchar', length: 20, default: 'open' })
  state!: SheetState;

  @Column({ type: 'varchar', length: 20, default: 'rows' })
  mode!: 'rows' | 'summary';

  @Column({ name: 'summary_n', type: 'integer', nullable: true })
  summaryN!: number | null;

  @Column({ name: 'summary_mean', type: 'numeric', nullable: true, transformer: numericToNumber })
  summaryMean!: number | null;

  @Column({ name: 'summary_sd', type: 'numeric', nullable: true, transformer: numericToNumber })
  summarySd!: number | null;

  @Column({ name: 'return_reasons', type: 'text', nullable: true })
  returnReasons!: string | null;

  @Column({ type: 'boolean', default: false })
  locked!: boolean;

  @Column({ name: 'submitted_at', type: 'timestamptz', nullable: true })
  submittedAt!: Date | null;

  @Column({ name: 'submitted_by', type: 'uuid', nullable: true })
  submittedBy!: string | null;

  @Column({ name: 'reviewed_at', type: 'timestamptz', nullable: true })
  reviewedAt!: Date | null;

  @Column({ name: 'reviewed_by', type: 'uuid', nullable: true })
  reviewedBy!: string | null;

  /** SHA-256 of the scored rows, stored when the sheet is submitted or accepted; any write to its scores clears it. */
  @Column({ name: 'rows_sha256', type: 'bytea', nullable: true, select: false })
  rowsSha256!: Buffer | null;

  @UpdateDateColumn({ name: 'updated_at', type: 'timestamptz' })
  updatedAt!: Date;
}
