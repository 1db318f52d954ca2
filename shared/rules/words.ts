import type { DesignReferenceRule, RatedAtLoadRule } from '../schemas/checklist'
import { DESIGN_POINT_LABELS } from '../schemas/design-point'
import { formatNumber } from '../units/format'

const designName = (key: string) => ((DESIGN_POINT_LABELS as Record<string, string>)[key] ?? key).toLowerCase()

/**
 * The words for the rules that judge against the design point at the test conditions, the same in the template
 * preview, on the runner and in the printed report ("Recorded against design; not judged", "Not more than the AHRI
 * 550/590 tolerance at the measured load below the design capacity …").
 */
export function conditionRuleWords(rule: DesignReferenceRule | RatedAtLoadRule): string {
  if (rule.type === 'design_reference') return `Recorded with its deviation from the ${designName(rule.key)}; not judged (the building or the tower sets it)`
  const share = formatNumber(rule.warnSharePct ?? 50, 0)
  const side = rule.side === 'below' ? 'short of' : 'above'
  const parts = [`Not more than the AHRI 550/590 tolerance at the measured load ${side} the ${designName(rule.key)}; marginal beyond ${share} % of it`]
  if (rule.onlyWhen) parts.push('judged only under the test conditions it names, else recorded')
  if (rule.minLoadPct !== undefined) parts.push(`recorded, not judged, below ${formatNumber(rule.minLoadPct, 0)} % load`)
  return parts.join('; ')
}
