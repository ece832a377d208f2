import { Column, Entity, PrimaryColumn } from 'typeorm';
import type { EdgeCredentialKind, EdgeCredentialScope } from '@ebbgate/shared';

/** A credential the device edge accepts for a monitor or for every monitor of a profile. */
@Entity('edge_credential')
export class EdgeCredentialRow {
  @PrimaryColumn({ type: 'varchar', length: 36 }) id!: string;
  @Column({ type: 'varchar', length: 8 }) scope!: EdgeCredentialScope;
  @Column({ name: 'scope_id', type: 'varchar', length: 36 }) scopeId!: string;
  @Column({ type: 'varchar', length: 24 }) kind!: EdgeCredentialKind;
  @Column({ type: 'varchar', length: 255 }) value!: string;
  @Column({ type: 'varchar', length: 255, nullable: true }) note!: string | null;
  @Column({ name: 'created_at', type: 'datetime', precision: 3 }) createdAt!: Date;
  @Column({ name: 'created_by', type: 'varchar', length: 64, nullable: true }) createdBy!: string | null;
}
