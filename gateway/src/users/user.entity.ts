import { Column, Entity, PrimaryColumn } from 'typeorm';
import type { Role } from '@ebbgate/shared';

@Entity('app_user')
export class UserRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  @Column({ type: 'varchar', length: 64, unique: true }) username!: string;
  @Column({ name: 'display_name', type: 'varchar', length: 128 }) displayName!: string;
  @Column({ name: 'password_hash', type: 'varchar', length: 255 }) passwordHash!: string;
  @Column({ type: 'simple-json' }) roles!: Role[];
  @Column({ type: 'boolean', default: false }) disabled!: boolean;
  @Column({ name: 'failed_attempts', type: 'int', default: 0 }) failedAttempts!: number;
  @Column({ name: 'locked_until', type: 'datetime', precision: 3, nullable: true }) lockedUntil!: Date | null;
  @Column({ name: 'last_sign_in_at', type: 'datetime', precision: 3, nullable: true }) lastSignInAt!: Date | null;
  @Column({ name: 'password_changed_at', type: 'datetime', precision: 3 }) passwordChangedAt!: Date;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
}

@Entity('user_session')
export class UserSessionRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  @Column({ name: 'user_id', type: 'varchar', length: 36 }) userId!: string;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'expires_at', type: 'datetime', precision: 3 }) expiresAt!: Date;
  @Column({ name: 'revoked_at', type: 'datetime', precision: 3, nullable: true }) revokedAt!: Date | null;
}
