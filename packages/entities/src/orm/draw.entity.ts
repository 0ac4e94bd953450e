import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { Arm } from '../schemas/studies.js';

/** A committed random assignment. Immutable: a trigger refuses UPDATE and DELETE. */
@Entity({ name: 'draws' })
export class DrawEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'study_id', type: 'uuid', unique: true })
  studyId!: string;

  @Column({ type: 'varchar', length: 200 })
  seed!: string;

  @Column({ type: 'varchar', length: 60 })
  algorithm!: string;

  @Column({ name: 'algorithm_version', type: 'varchar', length: 20 })
  algorithmVersion!: string;

  @Column({ type: 'varchar', length: 20 })
  unit!: 'classroom' | 'school';

  @Column({ type: 'jsonb' })
  blocks!: { blockId: string; unitIds: string[] }[];

  @Column({ type: 'jsonb' })
  assignments!: { blockId: string; unitId: string; arm: Arm }[];

  @Column({ name: 'committed_by', type: 'uuid' })
  committedBy!: string;

  @CreateDateColumn({ name: 'committed_at', type: 'timestamptz' })
  committedAt!: Date;
}

/** A manual change of one classroom's arm after the draw; it makes the study quasi-experimental. */
@Entity({ name: 'draw_reassignments' })
export class DrawReassignmentEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'draw_id', type: 'uuid' })
  drawId!: string;

  @Column({ name: 'classroom_id', type: 'uuid' })
  classroomId!: string;

  @Column({ name: 'from_arm', type: 'varchar', length: 20 })
  fromArm!: Arm;

  @Column({ name: 'to_arm', type: 'varchar', length: 20 })
  arm!: Arm;

  @Column({ type: 'text' })
  reason!: string;

  @Column({ name: 'by_user', type: 'uuid' })
  by!: string;

  @CreateDateColumn({ type: 'timestamptz' })
  at!: Date;
}
