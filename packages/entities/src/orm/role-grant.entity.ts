import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, PrimaryGeneratedColumn } from 'typeorm';
import type { Role } from '../schemas/roles.js';
import type { UserEntity } from './user.entity.js';

@Entity({ name: 'role_grants' })
export class RoleGrantEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  @Column({ name: 'user_id', type: 'uuid' })
  userId!: string;

  @ManyToOne('UserEntity', (user: UserEntity) => user.grants, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'user_id' })
  user!: UserEntity;

  @Column({ type: 'varchar', length: 20 })
  role!: Role;

  /** The school this grant is limited to (teachers, principals); null for district-wide roles. */
  @Column({ name: 'site_id', type: 'uuid', nullable: true })
  siteId!: string | null;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt!: Date;
}
