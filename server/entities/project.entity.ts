import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, OneToMany, PrimaryGeneratedColumn, UpdateDateColumn, type Relation } from 'typeorm'
import { Organization } from './organization.entity'
import { ProjectMember } from './project-member.entity'

@Entity({ name: 'project' })
export class Project {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'organization_id' })
  organizationId: string

  @ManyToOne(() => Organization, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'organization_id' })
  organization: Relation<Organization>

  /** Short reference printed on reports, e.g. `VXH-CP`. */
  @Column({ type: 'text', unique: true })
  code: string

  @Column({ type: 'text' })
  name: string

  @Column({ type: 'text', name: 'site_name' })
  siteName: string

  @Column({ type: 'text', name: 'site_address' })
  siteAddress: string

  /** IANA time zone of the site, e.g. `America/Chicago`; signatures show local time in it. */
  @Column({ type: 'text', name: 'time_zone' })
  timeZone: string

  @Column({ type: 'text', name: 'unit_system', default: 'IP' })
  unitSystem: 'IP' | 'SI'

  /** Who receives the sealed report when a run is accepted. */
  @Column({ type: 'text', array: true, name: 'distribution_list', default: () => "'{}'" })
  distributionList: string[]

  /** Site elevation, metres above sea level: the standard atmosphere there is the site's barometric pressure. */
  @Column({ type: 'double precision', name: 'site_elevation_m', nullable: true })
  siteElevationM: number | null

  /** The site's barometric pressure, kPa, when stated (it wins over the elevation). */
  @Column({ type: 'double precision', name: 'barometric_kpa', nullable: true })
  barometricKpa: number | null

  /** Paper size of this project's handover reports. */
  @Column({ type: 'text', name: 'report_paper', default: 'Letter' })
  reportPaper: 'A4' | 'Letter'

  /** When the project was closed: no new runs start; every report stays readable (retention). */
  @Column({ type: 'timestamptz', name: 'closed_at', nullable: true })
  closedAt: Date | null

  @Column({ type: 'uuid', name: 'closed_by', nullable: true })
  closedById: string | null

  /** Edit version: an edit names the version it was made on, and one made on an older version is refused (409). */
  @Column({ type: 'integer', default: 1 })
  version: number

  @OneToMany(() => ProjectMember, (m) => m.project)
  members: Relation<ProjectMember[]>

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date

  @UpdateDateColumn({ type: 'timestamptz', name: 'updated_at' })
  updatedAt: Date
}
