import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm';

/** A school of the district that can take part in studies. */
@Entity({ name: 'sites' })
export class SiteEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ type: 'varchar', length: 160 })
  name!: string;

  /** The district's own short code for the school; unique. */
  @Column({ type: 'varchar', length: 20, unique: true })
  code!: string;

  /** The principal who receives this school's digests. */
  @Column({ name: 'principal_id', type: 'uuid', nullable: true })
  principalId!: string | null;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt!: Date;
}
