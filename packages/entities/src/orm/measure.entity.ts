import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { MeasureKind, MeasureScale } from '../schemas/studies.js';
import { numericToNumber } from './numeric.js';

@Entity({ name: 'measures' })
export class MeasureEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @Column({ type: 'varchar', length: 120 })
  name!: string;

  @Column({ type: 'varchar', length: 10 })
  scale!: MeasureScale;

  @Column({ name: 'min_score', type: 'numeric', transformer: numericToNumber })
  minScore!: number;

  @Column({ name: 'max_score', type: 'numeric', transformer: numericToNumber })
  maxScore!: number;

  @Column({ name: 'higher_is_better', type: 'boolean' })
  higherIsBetter!: boolean;

  @Column({ type: 'varchar', length: 20 })
  kind!: MeasureKind;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt!: Date;
}
