import { Foundation1764633600000 } from './1764633600000-Foundation'
import { RateLimit1764633700000 } from './1764633700000-RateLimit'
import { EquipmentAndTemplates1764640800000 } from './1764640800000-EquipmentAndTemplates'
import { Runs1764648000000 } from './1764648000000-Runs'
import { SignaturesAndMail1764655200000 } from './1764655200000-SignaturesAndMail'
import { Reports1764658800000 } from './1764658800000-Reports'
import { ArchiveIndex1764662400000 } from './1764662400000-ArchiveIndex'
import { CloseoutAndRetention1764669600000 } from './1764669600000-CloseoutAndRetention'
import { ArchiveQueryIndexes1764673200000 } from './1764673200000-ArchiveQueryIndexes'
import { SignedSnapshot1764680000000 } from './1764680000000-SignedSnapshot'
import { EditVersions1764700000000 } from './1764700000000-EditVersions'
import { Dispositions1764710000000 } from './1764710000000-Dispositions'
import { SiteBarometric1764720000000 } from './1764720000000-SiteBarometric'
import { CheckSupersession1764730000000 } from './1764730000000-CheckSupersession'
import { RunProgressAndAuditIndexes1764740000000 } from './1764740000000-RunProgressAndAuditIndexes'
import { RunRevision1764750000000 } from './1764750000000-RunRevision'

/** Every migration in order. Listed by hand so tsx, Vitest and the CLI all load the same classes without a glob. */
export const migrations = [
  Foundation1764633600000, RateLimit1764633700000, EquipmentAndTemplates1764640800000, Runs1764648000000, SignaturesAndMail1764655200000, Reports1764658800000, ArchiveIndex1764662400000,
  CloseoutAndRetention1764669600000,
  ArchiveQueryIndexes1764673200000,
  SignedSnapshot1764680000000,
  EditVersions1764700000000,
  Dispositions1764710000000,
  SiteBarometric1764720000000,
  CheckSupersession1764730000000,
  RunProgressAndAuditIndexes1764740000000,
  RunRevision1764750000000,
]
