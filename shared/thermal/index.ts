export * from './identify';
export * from './rules';
export * from './track';
export * from './trend';
