export * from './counting'
export * from './signature'
export * from './snapshot'
