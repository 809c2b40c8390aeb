import type { DataSource } from 'typeorm';
import type { Services } from './composition';
import type { ServerConfig } from './config';
import type { EventBus } from './events';
import type { AuditService } from './modules/audit/audit.service';

/**
 * What every service needs, built once by `createContext` in server/composition.ts (the
 * composition root; tests use the same one with overrides). `services` is typed: one field per
 * service, no lookup by string.
 */
export interface AppContext {
  ds: DataSource;
  config: ServerConfig;
  audit: AuditService;
  /** In-process events, typed by the event map in server/events.ts. */
  events: EventBus;
  /** Wall clock; tests replace it. */
  now: () => Date;
  services: Services;
  /** Register something to release when the app shuts down (timers, stores). */
  onClose: (fn: () => Promise<void> | void) => void;
  close: () => Promise<void>;
}
