export * from './roles'
export * from './api'
export * from './run'
export * from './report'
