import type { MathNode } from 'mathjs'
import {
  capacityKw,
  capacityTons,
  heatBalancePct,
  waterHeatTons,
  kwToTons,
  tonsToKw,
  waterSideHeatKw,
} from '../engineering/capacity'
import { copFromKwPerTon, designDeviationPct, eerFromKwPerTon, kwPerTon, kwPerTonFromCop } from '../engineering/efficiency'
import { unbalancePct } from '../engineering/electrical'
import { EngineeringError } from '../engineering/errors'
import {
  condenserApproachF,
  evaporatorApproachF,
  saturationPressureKpaAbs,
  saturationPressurePsig,
  saturationTempC,
  saturationTempF,
  type SaturationSide,
} from '../engineering/refrigerant'
import { math } from './math'

type ExpressionFunction = (...args: never[]) => number

/** What an expression needs to know about the site: the atmosphere gauge pressures are read against, kPa. */
export interface ExpressionSite {
  atmosphereKpa?: number
}

/** Functions a computed field's expression may call: the engineering calculations and a few plain ones. */
export const EXPRESSION_FUNCTIONS: Readonly<Record<string, ExpressionFunction>> = {
  capacityTons,
  waterHeatTons,
  capacityKw,
  waterSideHeatKw,
  tonsToKw,
  kwToTons,
  heatBalancePct,
  kwPerTon,
  copFromKwPerTon,
  kwPerTonFromCop,
  eerFromKwPerTon,
  designDeviationPct,
  unbalancePct,
  saturationTempF,
  saturationPressurePsig,
  saturationTempC,
  saturationPressureKpaAbs,
  evaporatorApproachF,
  condenserApproachF,
  abs: (x: number) => Math.abs(x),
  min: (...xs: number[]) => Math.min(...xs),
  max: (...xs: number[]) => Math.max(...xs),
  sqrt: (x: number) => Math.sqrt(x),
  mean: (...xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length,
}

/** The name under which expressions reach the equipment's design point: `design.capacity`. */
export const DESIGN_SCOPE_NAME = 'design'

const ALLOWED_OPERATORS = new Set(['add', 'subtract', 'multiply', 'divide', 'pow', 'unaryMinus', 'unaryPlus'])

export interface ParsedExpression {
  source: string
  /** Field ids the expression reads, in order of first use. */
  fieldRefs: string[]
  /** Design-point keys the expression reads through `design.key`. */
  designRefs: string[]
  /** The result for these field values and design-point values; throws on a non-finite result. */
  /** `site.atmosphereKpa` is the atmosphere gauge pressures are read against (standard sea level when absent). */
  evaluate(fields: Readonly<Record<string, number>>, design: Readonly<Record<string, number | string>>, site?: ExpressionSite): number
}

function invalid(source: string, why: string): EngineeringError {
  return new EngineeringError('INVALID_EXPRESSION', `Expression "${source}": ${why}`, { expression: source })
}

const parsedCache = new Map<string, ParsedExpression>()
const PARSED_CACHE_LIMIT = 2000

/**
 * The expression parsed by mathjs and checked against a whitelist of node types, operators and functions. A parsed
 * expression holds no state, so each source text is parsed once per process (a run's computed fields are judged on
 * every save).
 */
export function parseExpression(source: string): ParsedExpression {
  const known = typeof source === 'string' ? parsedCache.get(source) : undefined
  if (known) return known
  const parsed = parseUncached(source)
  if (parsedCache.size >= PARSED_CACHE_LIMIT) parsedCache.delete(parsedCache.keys().next().value as string)
  parsedCache.set(source, parsed)
  return parsed
}

function parseUncached(source: string): ParsedExpression {
  if (typeof source !== 'string' || source.trim() === '') throw invalid(String(source), 'it is empty')
  let root: MathNode
  try {
    root = math.parse(source)
  } catch (err) {
    throw invalid(source, (err as Error).message)
  }
  const fieldRefs: string[] = []
  const designRefs: string[] = []
  const functionNodes = new Set<MathNode>()
  const accessorObjects = new Set<MathNode>()

  // Only arithmetic, numbers, strings (refrigerant names), arrays (phase lists), whitelisted
  // calls, field names and `design.key` pass; assignments, units, ranges, conditionals and
  // arbitrary property access are rejected before anything is evaluated.
  root.traverse((node, _path, parent) => {
    switch (node.type) {
      case 'ConstantNode': {
        const value = (node as unknown as { value: unknown }).value
        if (typeof value !== 'number' && typeof value !== 'string') throw invalid(source, `constant ${String(value)} is not allowed`)
        return
      }
      case 'ParenthesisNode':
      case 'ArrayNode':
        return
      case 'OperatorNode': {
        const fn = (node as unknown as { fn: string }).fn
        if (!ALLOWED_OPERATORS.has(fn)) throw invalid(source, `operator "${(node as unknown as { op: string }).op}" is not allowed`)
        return
      }
      case 'FunctionNode': {
        const fnNode = (node as unknown as { fn: MathNode }).fn
        const name = fnNode.type === 'SymbolNode' ? (fnNode as unknown as { name: string }).name : null
        if (name === null || !Object.hasOwn(EXPRESSION_FUNCTIONS, name)) {
          throw invalid(source, `function "${name ?? fnNode.toString()}" is not available (use: ${Object.keys(EXPRESSION_FUNCTIONS).join(', ')})`)
        }
        functionNodes.add(fnNode)
        return
      }
      case 'AccessorNode': {
        const accessor = node as unknown as { object: MathNode; index: { dimensions: MathNode[]; isObjectProperty(): boolean; getObjectProperty(): string | null } }
        const objectName = accessor.object.type === 'SymbolNode' ? (accessor.object as unknown as { name: string }).name : null
        const key = accessor.index.isObjectProperty() ? accessor.index.getObjectProperty() : null
        if (objectName !== DESIGN_SCOPE_NAME || key === null) throw invalid(source, `only design.<key> may be read with a dot`)
        if (!designRefs.includes(key)) designRefs.push(key)
        accessorObjects.add(accessor.object)
        return
      }
      case 'IndexNode':
        if (parent?.type === 'AccessorNode') return
        throw invalid(source, 'indexing is not allowed')
      case 'SymbolNode': {
        if (functionNodes.has(node) || accessorObjects.has(node)) return
        if (parent?.type === 'AccessorNode' && (parent as unknown as { object: MathNode }).object === node) return
        const name = (node as unknown as { name: string }).name
        if (name === DESIGN_SCOPE_NAME) throw invalid(source, 'design must be followed by .<key>')
        if (Object.hasOwn(EXPRESSION_FUNCTIONS, name)) throw invalid(source, `"${name}" is a function and must be called`)
        if (!fieldRefs.includes(name)) fieldRefs.push(name)
        return
      }
      default:
        throw invalid(source, `${node.type} is not allowed`)
    }
  })

  const compiled = root.compile()
  return {
    source,
    fieldRefs,
    designRefs,
    evaluate(fields, design, site) {
      const scope = new Map<string, unknown>(Object.entries(EXPRESSION_FUNCTIONS))
      if (site?.atmosphereKpa !== undefined) {
        // Gauge readings are relative to the site's atmosphere, not to sea level.
        const atm = site.atmosphereKpa
        scope.set('saturationTempF', (r: string, p: number, side: SaturationSide = 'dew') => saturationTempF(r, p, side, atm))
        scope.set('saturationPressurePsig', (r: string, t: number, side: SaturationSide = 'dew') => saturationPressurePsig(r, t, side, atm))
      }
      for (const ref of fieldRefs) {
        if (!Object.hasOwn(fields, ref)) throw new EngineeringError('MISSING_CONTEXT', `Expression "${source}" needs field ${ref}`, { field: ref })
        scope.set(ref, fields[ref])
      }
      const designScope: Record<string, number | string> = {}
      for (const key of designRefs) {
        if (!Object.hasOwn(design, key)) throw new EngineeringError('MISSING_DESIGN_VALUE', `Expression "${source}" needs design value ${key}`, { key })
        designScope[key] = design[key]
      }
      scope.set(DESIGN_SCOPE_NAME, designScope)
      let result: unknown
      try {
        result = compiled.evaluate(scope)
      } catch (err) {
        if (err instanceof EngineeringError) throw err
        throw invalid(source, (err as Error).message)
      }
      if (typeof result !== 'number' || !Number.isFinite(result)) {
        throw new EngineeringError('NON_FINITE', `Expression "${source}" did not give a finite number`, { expression: source, result: String(result) })
      }
      return result
    },
  }
}
