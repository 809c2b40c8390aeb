/**
 * One device's history on one page (issue #22 item 3):
 *   GET /api/devices/:deviceId/history
 * the lot and its traceability, every socket the device sat in (rig, socket, from–to), the runs,
 * readings at each read point with drift against time zero, trips, alarms, dispositions with their
 * reasons, and every version of each reading (append-only records).
 */
import { z } from 'zod';
import type { DeviceReadPointDrift, ReadingVersion } from './measurements';

export const deviceHistoryParamsSchema = z.object({ deviceId: z.string().uuid('Not a valid device id') });

export interface DeviceHistoryLot {
  id: string;
  code: string;
  partNumber: string;
  deviceTypeId: string;
  dateCode: string;
  waferLot: string;
  assemblyLot: string;
  dieRevision: string;
}

export interface DeviceSocketStint {
  runId: string;
  runCode: string;
  runState: string;
  planName: string;
  planKind: string;
  rigCode: string | null;
  socketIndex: number;
  /** When stress began with the device in this socket (the run's start), null before Start. */
  from: string | null;
  /** The trip that ended its stress, else the run's end; null while it runs. */
  to: string | null;
  creditedHours: number;
  tripped: boolean;
  trippedAt: string | null;
  tripReason: string | null;
  /** The verdict's first failed read point (run_sockets.failed_at_h), null when none. */
  failedAtH: number | null;
  /** The run's first-failure read point from the drift (null when it never broke a limit). */
  firstFailedH: number | null;
  status: 'pass' | 'fail' | 'no-time-zero' | 'not-measured' | 'not-judged';
  /** Readings per read point with drift against time zero (current versions). */
  readPoints: DeviceReadPointDrift[];
  /** Every version of every reading, oldest first per read point. */
  versions: ReadingVersion[];
}

export interface DeviceAlarm {
  runCode: string;
  kind: string;
  severity: string;
  title: string;
  message: string;
  raisedAt: string;
  acknowledgedAt: string | null;
  clearedAt: string | null;
}

export interface DeviceDisposition {
  runCode: string;
  readPointH: number;
  kind: string;
  label: string;
  reason: string;
  byName: string;
  at: string;
}

export interface DeviceHistoryView {
  deviceId: string;
  serial: string;
  lot: DeviceHistoryLot;
  sockets: DeviceSocketStint[];
  alarms: DeviceAlarm[];
  dispositions: DeviceDisposition[];
}
