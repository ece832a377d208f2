/**
 * Every entity and migration of the gateway, listed explicitly (no globbing, so tsx, vitest and
 * a compiled build all load the same set). Add a capability's rows and migrations here; migrations
 * in timestamp order (the order TypeORM applies them in).
 */
import { AssessmentRow } from '../assessments/assessment.entity';
import { AuditEntryRow } from '../audit/audit-entry.entity';
import { BedRow, DeviceKeyRow, MonitorProfileRow, MonitorRow } from '../devices/device.entities';
import { SiteSettingRow } from '../settings/site-setting.entity';
import { UserRow, UserSessionRow } from '../users/user.entity';
import { AnalysisWindowRow } from '../analysis/analysis-window.entity';
import { InboundMessageRow, WaveformSegmentRow } from '../ingest/ingest.entities';
import { EdgeCredentialRow } from '../ingest/edge-credential.entity';
import { EdgeSecurity1765200000000 } from './migrations/1765200000000-edge-security';
import { Ingest1764700000001 } from './migrations/1764700000001-ingest';
import { Foundation1764600000000 } from './migrations/1764600000000-foundation';
import { Assessments1764650000000 } from './migrations/1764650000000-assessments';
import { SiteSettings1764900000000 } from './migrations/1764900000000-site-settings';
import { SignInThrottle1765300000000 } from './migrations/1765300000000-sign-in-throttle';
import { EngineTwo1765100000000 } from './migrations/1765100000000-engine-two';
import { RawEncoding1765500000000 } from './migrations/1765500000000-raw-encoding';

import { AlertIncidentRow, AlertMailRow, DeliveryAttemptRow, DeliveryRow, DestinationRow } from '../delivery/delivery.entities';
import { Delivery1764800000001 } from './migrations/1764800000001-delivery';
import { DeliveryReliability1765400000000 } from './migrations/1765400000000-delivery-reliability';

export const ENTITIES = [
  UserRow,
  UserSessionRow,
  AuditEntryRow,
  MonitorProfileRow,
  BedRow,
  MonitorRow,
  DeviceKeyRow,
  AssessmentRow,
  InboundMessageRow,
  WaveformSegmentRow,
  AnalysisWindowRow,
  DestinationRow,
  DeliveryRow,
  DeliveryAttemptRow,
  AlertIncidentRow,
  AlertMailRow,
  SiteSettingRow,
  EdgeCredentialRow,
];

export const MIGRATIONS = [
  Foundation1764600000000,
  Assessments1764650000000,
  Ingest1764700000001,
  Delivery1764800000001,
  SiteSettings1764900000000,
  EngineTwo1765100000000,
  EdgeSecurity1765200000000,
  SignInThrottle1765300000000,
  DeliveryReliability1765400000000,
  RawEncoding1765500000000,
];
