/**
 * The composition root: the one place the API process's services are built and handed their
 * dependencies. main.ts, tests/support/api.ts and the broker tests all call `createContext`;
 * tests pass overrides (clock, mail retry options) instead of swapping services afterwards.
 *
 * The request-side services are built here, eagerly and once. The live parts (MQTT link, ingest,
 * protection monitor, scheduler) exist only while the background features run (features.ts): they
 * are typed slots, set by their start function and cleared by its stop.
 */
import { Passport } from 'passport';
import type { DataSource } from 'typeorm';
import type { ServerConfig } from './config';
import type { AppContext } from './context';
import { createEventBus } from './events';
import { AnalyticsService } from './modules/analytics/analytics.service';
import { ForecastService } from './modules/forecast/forecast.service';
import { ApprovalsService } from './modules/approvals/approvals.service';
import { SignoffService } from './modules/signoff/signoff.service';
import { ReportsService } from './modules/reports/reports.service';
import { DeviceHistoryService } from './modules/device-history/device-history.service';
import { QualificationsService } from './modules/qualifications/qualifications.service';
import { AlarmsService } from './modules/alarms/alarms.service';
import { AuditService } from './modules/audit/audit.service';
import { AuthService } from './modules/auth/auth.service';
import { DeviceTypesService } from './modules/device-types/device-types.service';
import { EvidenceService } from './modules/evidence/evidence.service';
import { FloorService } from './modules/floor/floor.service';
import { FloorStream } from './modules/floor/floor.stream';
import { LotsService } from './modules/lots/lots.service';
import { MailService, type MailServiceOptions } from './modules/mail/mail.service';
import { MeasurementsService } from './modules/measurements/measurements.service';
import { NotificationsService } from './modules/notifications/notifications.service';
import { PlansService } from './modules/plans/plans.service';
import type { ProtectionMonitor } from './modules/protection/protection.monitor';
import { TripResetService } from './modules/protection/trip-reset.service';
import { RigsService } from './modules/rigs/rigs.service';
import { LabSettingsService } from './modules/lab-settings/lab-settings.service';
import { RunsService } from './modules/runs/runs.service';
import type { RunScheduler } from './modules/scheduler/scheduler';
import type { LeadershipStatus } from './cluster/leadership';
import type { TelemetryLive } from '../shared/schemas/rigs';
import type { RigLink } from './modules/telemetry/contracts';
import type { TelemetryIngest } from './modules/telemetry/ingest';
import { TelemetryService } from './modules/telemetry/telemetry.service';
import { UsersService } from './modules/users/users.service';
import { ReplanService } from './modules/replan/replan.service';
import { MakeUpService } from './modules/make-up/make-up.service';
import { UtilisationService } from './modules/utilisation/utilisation.service';
import { ThermalService } from './modules/thermal/thermal.service';
import type { ThermalTracker } from './modules/thermal/thermal.tracker';

/** Every service of the API process. */
export interface Services {
  /** One passport per app (not the process-wide default), so two apps in one process never share strategies. */
  passport: InstanceType<typeof Passport>;
  auth: AuthService;
  users: UsersService;
  deviceTypes: DeviceTypesService;
  lots: LotsService;
  plans: PlansService;
  measurements: MeasurementsService;
  analytics: AnalyticsService;
  forecast: ForecastService;
  evidence: EvidenceService;
  approvals: ApprovalsService;
  signoff: SignoffService;
  reports: ReportsService;
  deviceHistory: DeviceHistoryService;
  runs: RunsService;
  qualifications: QualificationsService;
  rigs: RigsService;
  labSettings: LabSettingsService;
  floor: FloorService;
  floorStream: FloorStream;
  telemetry: TelemetryService;
  alarms: AlarmsService;
  notifications: NotificationsService;
  tripResets: TripResetService;
  replan: ReplanService;
  utilisation: UtilisationService;
  makeUp: MakeUpService;
  thermal: ThermalService;
  /** Replaced (typed) when protection starts with its own retry options (protection/start.ts). */
  mail: MailService;
  /** Live parts: set while the background features run, undefined otherwise (or a test's fake link). */
  rigLink: RigLink | undefined;
  telemetryIngest: TelemetryIngest | undefined;
  protection: ProtectionMonitor | undefined;
  /** The socket thermal model's live tracker (started with protection, protection/start.ts). */
  thermalTracker: ThermalTracker | undefined;
  scheduler: RunScheduler | undefined;
  /** The workers' leader election (EMBERLOT_WORKERS=elect, server/cluster/); undefined: this process always leads. */
  leadership: { status(): LeadershipStatus } | undefined;
  /** A standby's copy of the leader's live ingest figures, as last relayed (server/cluster/event-relay.ts). */
  leaderLive: RelayedLive | undefined;
}

/** The leader's live ingest figures as a standby received them. */
export interface RelayedLive {
  processId: string;
  /** ISO time on the leader's clock. */
  measuredAt: string;
  /** Date.now() here when they arrived. */
  receivedAtMs: number;
  live: TelemetryLive;
}

export interface CompositionOverrides {
  /** The wall clock (tests may also assign ctx.now later: every service reads it through ctx). */
  now?: () => Date;
  /** Retry and timeout options of the mail service. */
  mail?: MailServiceOptions;
}

export function createContext(ds: DataSource, config: ServerConfig, overrides: CompositionOverrides = {}): AppContext {
  const closers: Array<() => Promise<void> | void> = [];
  const ctx: AppContext = {
    ds,
    config,
    audit: new AuditService(ds),
    events: createEventBus(),
    now: overrides.now ?? (() => new Date()),
    services: undefined as never, // assigned right below, before anything can read it
    onClose: (fn) => void closers.push(fn),
    close: async () => {
      for (const fn of closers.splice(0).reverse()) await fn();
    },
  };
  ctx.services = createServices(ctx, overrides);
  return ctx;
}

function createServices(ctx: AppContext, overrides: CompositionOverrides): Services {
  const now = () => ctx.now();
  const floor = new FloorService(ctx);
  const mail = new MailService(ctx, overrides.mail);
  const auth = new AuthService(ctx.ds, ctx.audit, now);
  const analytics = new AnalyticsService(ctx.ds);
  const lots = new LotsService(ctx.ds, ctx.audit);
  const measurements = new MeasurementsService(ctx.ds, ctx.audit, now);
  const signoff = new SignoffService(ctx.ds, ctx.audit, auth, analytics, now);
  return {
    passport: new Passport(),
    auth,
    users: new UsersService(ctx.ds, ctx.audit),
    deviceTypes: new DeviceTypesService(ctx.ds, ctx.audit),
    lots,
    plans: new PlansService(ctx.ds, ctx.audit, now),
    measurements,
    analytics,
    forecast: new ForecastService(ctx, analytics),
    evidence: new EvidenceService(ctx.ds, ctx.audit, now),
    approvals: new ApprovalsService(ctx.ds, ctx.audit, now),
    signoff,
    reports: new ReportsService(ctx.ds, analytics, measurements, signoff, lots, now),
    deviceHistory: new DeviceHistoryService(ctx.ds, measurements),
    runs: new RunsService(ctx),
    qualifications: new QualificationsService(ctx),
    rigs: new RigsService(ctx),
    labSettings: new LabSettingsService(ctx),
    floor,
    floorStream: new FloorStream(ctx, floor),
    telemetry: new TelemetryService(ctx),
    alarms: new AlarmsService(ctx),
    notifications: new NotificationsService(ctx),
    tripResets: new TripResetService(ctx),
    replan: new ReplanService(ctx),
    utilisation: new UtilisationService(ctx),
    makeUp: new MakeUpService(ctx),
    thermal: new ThermalService(ctx),
    mail,
    rigLink: undefined,
    telemetryIngest: undefined,
    protection: undefined,
    thermalTracker: undefined,
    scheduler: undefined,
    leadership: undefined,
    leaderLive: undefined,
  };
}
