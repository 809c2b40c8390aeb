export * from './plan-check';
export * from './protection';
