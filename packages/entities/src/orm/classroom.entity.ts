import { Column, CreateDateColumn, Entity, PrimaryColumn, PrimaryGeneratedColumn } from 'typeorm';
import type { Arm } from '../schemas/studies.js';

/** A site enrolled in a study. */
@Entity({ name: 'study_sites' })
export class StudySiteEntity {
  @PrimaryColumn({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @PrimaryColumn({ name: 'site_id', type: 'uuid' })
  siteId!: string;

  @CreateDateColumn({ name: 'enrolled_at', type: 'timestamptz' })
  enrolledAt!: Date;
}

@Entity({ name: 'cohorts' })
export class CohortEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @Column({ type: 'varchar', length: 120 })
  name!: string;
}

@Entity({ name: 'classrooms' })
export class ClassroomEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @Column({ name: 'site_id', type: 'uuid' })
  siteId!: string;

  @Column({ name: 'cohort_id', type: 'uuid' })
  cohortId!: string;

  @Column({ name: 'teacher_id', type: 'uuid' })
  teacherId!: string;

  @Column({ type: 'varchar', length: 120 })
  name!: string;

  @Column({ type: 'varchar', length: 20 })
  grade!: string;

  @Column({ name: 'expected_size', type: 'integer' })
  expectedSize!: number;

  /** Set when the draw is committed (or by an audited reassignment). */
  @Column({ type: 'varchar', length: 20, nullable: true })
  arm!: Arm | null;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt!: Date;
}
