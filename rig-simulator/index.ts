/** Rig simulator: pure physics, outbox, telemetry and the networked rig/fleet. */
export * from './physics';
export * from './outbox';
export * from './commands';
export * from './telemetry';
export * from './rig';
export { createRng, gaussian, hashString } from './rng';
