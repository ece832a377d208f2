import { Column, Entity, PrimaryColumn } from 'typeorm';

/** Site settings changed at run time by an admin; one row per section (analysis, delivery, alerts). */
@Entity('site_setting')
export class SiteSettingRow {
  @PrimaryColumn({ type: 'varchar', length: 64 }) section!: string;
  @Column({ type: 'simple-json' }) value!: object;
  @Column({ name: 'updated_at', type: 'datetime', precision: 3 }) updatedAt!: Date;
  @Column({ name: 'updated_by', type: 'varchar', length: 64, nullable: true }) updatedBy!: string | null;
}
