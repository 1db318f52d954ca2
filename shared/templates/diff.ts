import type { ChecklistDefinition } from '../schemas/checklist'

/** One property that differs between two versions of the same section, step or field. */
export interface DiffPropertyChange {
  /** 'label', 'unit', 'required', 'rule.max', 'rule.type', 'cautions', 'computed.expression', 'title', … */
  property: string
  before: unknown
  after: unknown
}

export interface DiffEntry {
  change: 'added' | 'removed' | 'changed' | 'moved'
  level: 'section' | 'step' | 'field'
  /** The section, step or field id. */
  id: string
  /** Where it is in the newer version (the older one for removed), e.g. 'sections[1].steps[0].fields[2]'. */
  path: string
  /** Section or step title, or field label, for display. */
  label: string
  /** The containing step id (fields) or section id (steps). */
  parentId?: string
  /** For 'changed', and for 'moved' when the item also changed. */
  changes?: DiffPropertyChange[]
}

export interface DefinitionDiff {
  summary: { added: number; removed: number; changed: number; moved: number }
  entries: DiffEntry[]
}

type Level = DiffEntry['level']
type Plain = Record<string, unknown>

/** A section, step or field where it sits in one version. */
interface Node {
  level: Level
  id: string
  path: string
  label: string
  parentId?: string
  item: Plain
  children: Node[]
}

const CHILD_KEY: Record<Level, string | null> = { section: 'steps', step: 'fields', field: null }
const CHILD_LEVEL: Record<Level, Level | null> = { section: 'step', step: 'field', field: null }

function asArray(v: unknown): Plain[] {
  return Array.isArray(v) ? v.filter((x): x is Plain => x !== null && typeof x === 'object') : []
}

function build(item: Plain, level: Level, path: string, parentId: string | undefined): Node {
  const id = String(item.id ?? '')
  const label = String((level === 'field' ? item.label : item.title) ?? id)
  const childKey = CHILD_KEY[level]
  const childLevel = CHILD_LEVEL[level]
  const children =
    childKey && childLevel ? asArray(item[childKey]).map((c, i) => build(c, childLevel, `${path}.${childKey}[${i}]`, id)) : []
  return { level, id, path, label, ...(parentId !== undefined ? { parentId } : {}), item, children }
}

function tree(def: ChecklistDefinition): Node[] {
  return asArray((def as unknown as Plain | null)?.sections).map((s, i) => build(s, 'section', `sections[${i}]`, undefined))
}

/** The first node of each id per level: a later duplicate (only in an invalid definition) counts as another item. */
function index(roots: Node[]): Record<Level, Map<string, Node>> {
  const out: Record<Level, Map<string, Node>> = { section: new Map(), step: new Map(), field: new Map() }
  const walk = (n: Node) => {
    if (!out[n.level].has(n.id)) out[n.level].set(n.id, n)
    n.children.forEach(walk)
  }
  roots.forEach(walk)
  return out
}

// Property order in `changes`: what a reviewer reads first. Keys not listed follow, sorted.
const FIELD_ORDER = ['label', 'kind', 'quantity', 'unit', 'required', 'help', 'cautions', 'choices', 'rule', 'computed']
const STEP_ORDER = ['title', 'help', 'cautions']
const SECTION_ORDER = ['title']
const RULE_ORDER = [
  'type', 'key',
  'min', 'max', 'warnMin', 'warnMax',
  'nominal', 'tolerance', 'warnTolerance', 'tolerancePct', 'warnTolerancePct',
  'lowerPct', 'upperPct', 'warnLowerPct', 'warnUpperPct',
  'lower', 'upper', 'warnLower', 'warnUpper',
  'expected', 'pass', 'marginal',
  'setpoint', 'reachWithinS', 'reachNotBeforeS', 'holdS', 'floor', 'warnFloor',
]

function ordered(keys: Iterable<string>, order: readonly string[]): string[] {
  const set = new Set(keys)
  const known = order.filter((k) => set.has(k))
  const rest = [...set].filter((k) => !order.includes(k)).sort()
  return [...known, ...rest]
}

function deepEqual(a: unknown, b: unknown): boolean {
  if (Object.is(a, b)) return true
  if (Array.isArray(a) || Array.isArray(b)) {
    if (!Array.isArray(a) || !Array.isArray(b) || a.length !== b.length) return false
    return a.every((x, i) => deepEqual(x, b[i]))
  }
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    const ka = Object.keys(a as Plain).filter((k) => (a as Plain)[k] !== undefined)
    const kb = Object.keys(b as Plain).filter((k) => (b as Plain)[k] !== undefined)
    if (ka.length !== kb.length) return false
    return ka.every((k) => deepEqual((a as Plain)[k], (b as Plain)[k]))
  }
  return false
}

/** Values that mean the same to a technician compare equal: `required` defaults to true, blank help and no cautions are none. */
function normalise(level: Level, key: string, value: unknown): unknown {
  if (level === 'field' && key === 'required') return value === undefined ? true : value
  if (key === 'help' && typeof value === 'string' && value.trim() === '') return undefined
  if (key === 'cautions' && Array.isArray(value) && value.length === 0) return undefined
  return value
}

function isPlain(v: unknown): v is Plain {
  return v !== null && typeof v === 'object' && !Array.isArray(v)
}

function propertyChanges(level: Level, before: Plain, after: Plain): DiffPropertyChange[] {
  const skip = new Set(['id', CHILD_KEY[level] ?? ''])
  const order = level === 'field' ? FIELD_ORDER : level === 'step' ? STEP_ORDER : SECTION_ORDER
  const keys = ordered([...Object.keys(before), ...Object.keys(after)].filter((k) => !skip.has(k)), order)
  const out: DiffPropertyChange[] = []
  for (const key of keys) {
    const b = normalise(level, key, before[key])
    const a = normalise(level, key, after[key])
    if (deepEqual(b, a)) continue
    // A rule or a computation is reported value by value: 'rule.max' 120 → 125, 'computed.expression'.
    if (level === 'field' && (key === 'rule' || key === 'computed') && (isPlain(b) || b === undefined) && (isPlain(a) || a === undefined)) {
      const bo = (b ?? {}) as Plain
      const ao = (a ?? {}) as Plain
      for (const sub of ordered([...Object.keys(bo), ...Object.keys(ao)], key === 'rule' ? RULE_ORDER : ['expression'])) {
        if (!deepEqual(bo[sub], ao[sub])) out.push({ property: `${key}.${sub}`, before: bo[sub], after: ao[sub] })
      }
      continue
    }
    out.push({ property: key, before: b, after: a })
  }
  return out
}

/** Ids on a longest common subsequence of two id lists: the items that kept their relative order. */
function keptInOrder(before: string[], after: string[]): Set<string> {
  const n = before.length
  const m = after.length
  const table: number[][] = Array.from({ length: n + 1 }, () => new Array<number>(m + 1).fill(0))
  for (let i = n - 1; i >= 0; i--) {
    for (let j = m - 1; j >= 0; j--) {
      table[i][j] = before[i] === after[j] ? table[i + 1][j + 1] + 1 : Math.max(table[i + 1][j], table[i][j + 1])
    }
  }
  const kept = new Set<string>()
  let i = 0
  let j = 0
  while (i < n && j < m) {
    if (before[i] === after[j]) {
      kept.add(before[i])
      i++
      j++
    } else if (table[i + 1][j] >= table[i][j + 1]) i++
    else j++
  }
  return kept
}

/**
 * What changed from one checklist definition to the next, matched by id at each level (section, step, field).
 *
 * - An item whose parent changed (a field now in another step, a step now in another section), or that was reordered
 *   among the siblings it shares with the older version, is 'moved' — with its `changes` when it also changed.
 * - An item with different properties is 'changed'; rule and computation values are compared one by one
 *   ('rule.max' 120 → 125, 'rule.type', 'computed.expression'); `required` left out counts as true.
 * - The children of an added or removed step or section are listed too, each added or removed (or moved, when it came
 *   from or went to a container that exists in the other version).
 * - Entries follow the newer version's document order, a parent before its children; a removed item comes where it
 *   was, after the nearest older sibling that kept its place in the same container.
 */
export function diffDefinitions(from: ChecklistDefinition, to: ChecklistDefinition): DefinitionDiff {
  const oldRoots = tree(from)
  const newRoots = tree(to)
  const oldIndex = index(oldRoots)
  const newIndex = index(newRoots)
  const entries: DiffEntry[] = []

  const matchOfNew = (n: Node): Node | undefined => (newIndex[n.level].get(n.id) === n ? oldIndex[n.level].get(n.id) : undefined)
  const isMatchedOld = (o: Node): boolean => oldIndex[o.level].get(o.id) === o && newIndex[o.level].has(o.id)

  const entry = (change: DiffEntry['change'], n: Node, changes?: DiffPropertyChange[]): DiffEntry => ({
    change,
    level: n.level,
    id: n.id,
    path: n.path,
    label: n.label,
    ...(n.parentId !== undefined ? { parentId: n.parentId } : {}),
    ...(changes && changes.length ? { changes } : {}),
  })

  const emitRemoved = (o: Node) => {
    entries.push(entry('removed', o))
    o.children.filter((c) => !isMatchedOld(c)).forEach(emitRemoved)
  }

  /** The new children of a container in order, with the old container's removed children slotted in where they were. */
  const walkChildren = (newChildren: Node[], oldChildren: Node[]) => {
    const oldHere = new Set(oldChildren)
    // Matched children that stay in this container; those that kept their relative order are not moved.
    const staying = newChildren.filter((c) => {
      const o = matchOfNew(c)
      return o !== undefined && oldHere.has(o)
    })
    const stayingOld = new Set(staying.map((c) => matchOfNew(c) as Node))
    const kept = keptInOrder(
      oldChildren.filter((o) => stayingOld.has(o)).map((o) => o.id),
      staying.map((c) => c.id),
    )
    const anchors = new Map<string | null, Node[]>()
    let anchor: string | null = null
    for (const o of oldChildren) {
      if (!isMatchedOld(o)) anchors.set(anchor, [...(anchors.get(anchor) ?? []), o])
      else if (stayingOld.has(o) && kept.has(o.id)) anchor = o.id
    }
    ;(anchors.get(null) ?? []).forEach(emitRemoved)
    for (const child of newChildren) {
      walk(child, kept)
      if (kept.has(child.id) && staying.includes(child)) (anchors.get(child.id) ?? []).forEach(emitRemoved)
    }
  }

  const walk = (n: Node, keptSiblings: Set<string>) => {
    const o = matchOfNew(n)
    if (!o) {
      entries.push(entry('added', n))
      walkChildren(n.children, [])
      return
    }
    const changes = propertyChanges(n.level, o.item, n.item)
    if (o.parentId !== n.parentId || !keptSiblings.has(n.id)) entries.push(entry('moved', n, changes))
    else if (changes.length) entries.push(entry('changed', n, changes))
    walkChildren(n.children, o.children)
  }

  walkChildren(newRoots, oldRoots)

  const summary = { added: 0, removed: 0, changed: 0, moved: 0 }
  for (const e of entries) summary[e.change]++
  return { summary, entries }
}
