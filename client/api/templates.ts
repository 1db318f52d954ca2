import type { TemplateDetail, TemplateSummary, TemplateVersionDetail, TemplateVersionSummary, ValidationIssue } from '@shared/types/api'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import type { TemplateCreateInput, TemplateUpdateInput } from '@shared/schemas/template'
import type { DefinitionDiff } from '@shared/templates'
import { http } from './http'

export type { DefinitionDiff, DiffEntry, DiffPropertyChange } from '@shared/templates'

/** The equipment a template is written for, with the words shown for it. */
export const EQUIPMENT_KINDS = [
  { value: 'centrifugal_chiller', label: 'Centrifugal chiller' },
  { value: 'pump', label: 'Pump' },
] as const
export type EquipmentKind = (typeof EQUIPMENT_KINDS)[number]['value']

export function equipmentKindLabel(kind: string): string {
  return EQUIPMENT_KINDS.find((k) => k.value === kind)?.label ?? kind.replace(/_/g, ' ')
}

/** A version with its definition typed as a checklist (the server stores only validated definitions, drafts aside). */
export type TemplateVersion = TemplateVersionDetail<ChecklistDefinition>

const base = (templateId: string) => `/templates/${encodeURIComponent(templateId)}`
const versionUrl = (templateId: string, number: number) => `${base(templateId)}/versions/${number}`

export const templatesApi = {
  list: () => http.get<{ templates: TemplateSummary[] }>('/templates').then((r) => r.templates),
  create: (input: TemplateCreateInput) => http.post<{ template: TemplateDetail }>('/templates', input).then((r) => r.template),
  update: (templateId: string, input: TemplateUpdateInput) =>
    http.patch<{ template: TemplateDetail }>(base(templateId), input).then((r) => r.template),
  get: (templateId: string) => http.get<{ template: TemplateDetail }>(base(templateId)).then((r) => r.template),

  version: (templateId: string, number: number) =>
    http.get<{ version: TemplateVersion }>(versionUrl(templateId, number)).then((r) => r.version),
  /** Opens the next draft, copied from `fromNumber` (the newest version when left out). */
  openDraft: (templateId: string, fromNumber?: number) =>
    http.post<{ version: TemplateVersion }>(`${base(templateId)}/versions`, fromNumber === undefined ? {} : { fromNumber }).then((r) => r.version),
  /** Saves on the draft's edit `version`; a 409 `edit_conflict` carries the draft as saved now (see editConflictOf). */
  saveDraft: (templateId: string, number: number, definition: unknown, version: number) =>
    http.put<{ version: TemplateVersion }>(versionUrl(templateId, number), { definition, version }).then((r) => r.version),
  discardDraft: (templateId: string, number: number) => http.delete<void>(versionUrl(templateId, number)),
  publish: (templateId: string, number: number, changelog: string) =>
    http.post<{ version: TemplateVersionSummary }>(`${versionUrl(templateId, number)}/publish`, { changelog }).then((r) => r.version),
  retire: (templateId: string, number: number) =>
    http.post<{ version: TemplateVersionSummary }>(`${versionUrl(templateId, number)}/retire`).then((r) => r.version),

  validate: (definition: unknown) => http.post<{ valid: boolean; errors: ValidationIssue[] }>('/templates/validate', { definition }),
  diff: (templateId: string, from: number, to: number) =>
    http.get<{ diff: DefinitionDiff }>(`${base(templateId)}/diff?from=${from}&to=${to}`).then((r) => r.diff),
}

/** Offers a definition as a `.json` download named after the template key and version. */
export function downloadDefinition(definition: unknown, fileName: string) {
  const blob = new Blob([JSON.stringify(definition, null, 2) + '\n'], { type: 'application/json' })
  const url = URL.createObjectURL(blob)
  const a = document.createElement('a')
  a.href = url
  a.download = fileName.endsWith('.json') ? fileName : `${fileName}.json`
  document.body.appendChild(a)
  a.click()
  a.remove()
  setTimeout(() => URL.revokeObjectURL(url), 1000)
}
