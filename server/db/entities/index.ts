export * from './user.entity';
export * from './device-type.entity';
export * from './lot.entity';
export * from './rig.entity';
export * from './stress-plan.entity';
export * from './run.entity';
export * from './telemetry.entity';
export * from './measurement.entity';
export * from './alarm.entity';
export * from './audit-log.entity';
export * from './evidence.entity';
export * from './telemetry-cycle.entity';
export * from './signoff.entity';
export * from './lab-settings.entity';
export * from './replan.entity';
export * from './qualification.entity';
export * from './forecast.entity';

import { UserEntity } from './user.entity';
import { DeviceTypeEntity } from './device-type.entity';
import { DeviceEntity, LotEntity } from './lot.entity';
import { RigEntity, RigMaintenanceEntity, RigServiceRecordEntity } from './rig.entity';
import { StressPlanEntity } from './stress-plan.entity';
import { RunEntity, RunLotEntity, RunSocketEntity, SampleEntity } from './run.entity';
import {
  RejectedMessageEntity,
  SystemCounterEntity,
  TelemetryBatchEntity,
  TelemetryRollupEntity,
  TelemetryHourlyEntity,
} from './telemetry.entity';
import { MeasurementEntity, MeasurementFileEntity, MeasurementUploadEntity, MeasurementVersionEntity } from './measurement.entity';
import { AlarmEntity, MailLogEntity, NotificationEntity } from './alarm.entity';
import { AuditLogEntity } from './audit-log.entity';
import { DeviceDispositionEntity } from './evidence.entity';
import { TelemetryCycleEntity } from './telemetry-cycle.entity';
import { OverrideRequestEntity, VerdictSignatureEntity } from './signoff.entity';
import { LabSettingsEntity } from './lab-settings.entity';
import { ReplanProposalEntity } from './replan.entity';

import { ChamberSampleEntity } from './chamber-sample.entity';
export { ChamberSampleEntity };
import { QualificationCellEntity, QualificationCellWithdrawalEntity, QualificationEntity } from './qualification.entity';

import {
  ForecastAlertLevelEntity,
  ForecastAlertSettingEntity,
  ForecastAlertStateEntity,
  ForecastAlertUserStateEntity,
} from './forecast.entity';
export const ENTITIES = [
  UserEntity,
  DeviceTypeEntity,
  LotEntity,
  DeviceEntity,
  RigEntity,
  RigMaintenanceEntity,
  StressPlanEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  TelemetryBatchEntity,
  TelemetryRollupEntity,
  TelemetryHourlyEntity,
  RejectedMessageEntity,
  SystemCounterEntity,
  MeasurementEntity,
  MeasurementUploadEntity,
  MeasurementVersionEntity,
  MeasurementFileEntity,
  AlarmEntity,
  NotificationEntity,
  MailLogEntity,
  AuditLogEntity,
  SampleEntity,
  DeviceDispositionEntity,
  TelemetryCycleEntity,
  RigServiceRecordEntity,
  OverrideRequestEntity,
  VerdictSignatureEntity,
  LabSettingsEntity,
  ReplanProposalEntity,
  ChamberSampleEntity,
  QualificationEntity,
  QualificationCellEntity,
  QualificationCellWithdrawalEntity,
  ForecastAlertSettingEntity,
  ForecastAlertStateEntity,
  ForecastAlertLevelEntity,
  ForecastAlertUserStateEntity,
];
