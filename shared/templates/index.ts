export { diffDefinitions } from './diff'
export type { DefinitionDiff, DiffEntry, DiffPropertyChange } from './diff'
