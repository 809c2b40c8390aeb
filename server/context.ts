import { EventEmitter } from 'node:events';
import type { DataSource } from 'typeorm';
import type { ServerConfig } from './config';
import { AuditService } from './modules/audit/audit.service';

/**
 * What every service needs, created once in main.ts (or per test). Feature services hang off
 * `services` so routes can reach them without globals.
 */
export interface AppContext {
  ds: DataSource;
  config: ServerConfig;
  audit: AuditService;
  /** In-process events: 'floor' (telemetry landed), 'alarm', 'run' … for live streams. */
  events: EventEmitter;
  /** Wall clock; tests replace it. */
  now: () => Date;
  services: Record<string, unknown>;
  /** Register something to release when the app shuts down (timers, stores). */
  onClose: (fn: () => Promise<void> | void) => void;
  close: () => Promise<void>;
}

export function createContext(ds: DataSource, config: ServerConfig): AppContext {
  const events = new EventEmitter();
  events.setMaxListeners(1000);
  const closers: Array<() => Promise<void> | void> = [];
  return {
    ds,
    config,
    audit: new AuditService(ds),
    events,
    now: () => new Date(),
    services: {},
    onClose: (fn) => void closers.push(fn),
    close: async () => {
      for (const fn of closers.splice(0).reverse()) await fn();
    },
  };
}
