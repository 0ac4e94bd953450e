import { Column, CreateDateColumn, Entity, PrimaryColumn, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';
import type { PlanContent, PlanFieldChange } from '../schemas/plan.js';

/** The editable draft of a study's plan, before sealing. */
@Entity({ name: 'plan_drafts' })
export class PlanDraftEntity {
  @PrimaryColumn({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @Column({ type: 'jsonb' })
  content!: PlanContent;

  @Column({ name: 'updated_by', type: 'uuid' })
  updatedBy!: string;

  @UpdateDateColumn({ name: 'updated_at', type: 'timestamptz' })
  updatedAt!: Date;
}

/** A sealed plan (version 1) or an amendment (2, 3, …). Immutable: a trigger refuses changes. */
@Entity({ name: 'plan_versions' })
export class PlanVersionEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @Column({ type: 'integer' })
  version!: number;

  @Column({ type: 'jsonb' })
  content!: PlanContent;

  /** SHA-256 of the canonical JSON of `content`. */
  @Column({ type: 'char', length: 64 })
  sha256!: string;

  @Column({ type: 'text', nullable: true })
  reason!: string | null;

  @Column({ type: 'jsonb' })
  changes!: PlanFieldChange[];

  @Column({ name: 'created_by', type: 'uuid' })
  createdBy!: string;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt!: Date;
}
