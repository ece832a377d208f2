import { Column, Entity, PrimaryGeneratedColumn } from 'typeorm';

/** Append-only: the migration adds triggers that refuse UPDATE and DELETE. */
@Entity('audit_entry')
export class AuditEntryRow {
  @PrimaryGeneratedColumn({ type: 'bigint' }) id!: string;
  @Column({ type: 'datetime', precision: 3 }) at!: Date;
  @Column({ name: 'actor_type', type: 'varchar', length: 16 }) actorType!: 'user' | 'device' | 'system';
  @Column({ name: 'actor_id', type: 'varchar', length: 64, nullable: true }) actorId!: string | null;
  @Column({ name: 'actor_name', type: 'varchar', length: 128, nullable: true }) actorName!: string | null;
  @Column({ type: 'varchar', length: 64 }) action!: string;
  @Column({ name: 'entity_type', type: 'varchar', length: 64 }) entityType!: string;
  @Column({ name: 'entity_id', type: 'varchar', length: 64, nullable: true }) entityId!: string | null;
  @Column({ type: 'simple-json', nullable: true }) before!: object | null;
  @Column({ type: 'simple-json', nullable: true }) after!: object | null;
  @Column({ name: 'request_id', type: 'varchar', length: 64, nullable: true }) requestId!: string | null;
}
