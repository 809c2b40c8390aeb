/** Read-point holds and the end of stress: dew point, the hold sequence, the lab's hold settings. */
export * from './dew-point';
export * from './sequence';
