import { Column, CreateDateColumn, Entity, OneToMany, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';
import type { RoleGrantEntity } from './role-grant.entity.js';

// Column types are always explicit: tsx/esbuild emit no decorator metadata.
@Entity({ name: 'users' })
export class UserEntity {
  @PrimaryGeneratedColumn('uuid')
  id!: string;

  /** Stored lower-case; unique. */
  @Column({ type: 'varchar', length: 254, unique: true })
  email!: string;

  @Column({ type: 'varchar', length: 120 })
  name!: string;

  /** Null until the invitation is accepted. */
  @Column({ name: 'password_hash', type: 'varchar', length: 100, nullable: true })
  passwordHash!: string | null;

  @Column({ type: 'boolean', default: true })
  active!: boolean;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt!: Date;

  @UpdateDateColumn({ name: 'updated_at', type: 'timestamptz' })
  updatedAt!: Date;

  @Column({ name: 'last_sign_in_at', type: 'timestamptz', nullable: true })
  lastSignInAt!: Date | null;

  /** Bumped by sign-out, password reset, role change and deactivation: tokens carrying an older one are refused. */
  @Column({ name: 'session_version', type: 'integer', default: 0 })
  sessionVersion!: number;

  @OneToMany('RoleGrantEntity', (grant: RoleGrantEntity) => grant.user)
  grants!: RoleGrantEntity[];
}
