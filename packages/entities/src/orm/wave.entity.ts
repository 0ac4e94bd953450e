import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { WaveKind } from '../schemas/studies.js';

@Entity({ name: 'waves' })
export class WaveEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'study_id', type: 'uuid' })
  studyId!: string;

  @Column({ type: 'varchar', length: 20 })
  kind!: WaveKind;

  @Column({ type: 'varchar', length: 120 })
  name!: string;

  /** Calendar dates (YYYY-MM-DD), in the district's own time zone. */
  @Column({ name: 'opens_on', type: 'date' })
  opensOn!: string;

  @Column({ name: 'closes_on', type: 'date' })
  closesOn!: string;
}
