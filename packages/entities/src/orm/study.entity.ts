import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';
import type { StudyStatus, UnitOfAssignment } from '../schemas/studies.js';

@Entity({ name: 'studies' })
export class StudyEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ type: 'varchar', length: 160 })
  title!: string;

  @Column({ type: 'text' })
  intervention!: string;

  @Column({ name: 'comparison_condition', type: 'text' })
  comparisonCondition!: string;

  @Column({ name: 'unit_of_assignment', type: 'varchar', length: 20 })
  unitOfAssignment!: UnitOfAssignment;

  @Column({ type: 'varchar', length: 20, default: 'drafting' })
  status!: StudyStatus;

  @Column({ name: 'quasi_experimental', type: 'boolean', default: false })
  quasiExperimental!: boolean;

  @Column({ name: 'created_by', type: 'uuid' })
  createdBy!: string;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt!: Date;

  @UpdateDateColumn({ name: 'updated_at', type: 'timestamptz' })
  updatedAt!: Date;
}
