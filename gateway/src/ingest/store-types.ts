/**
 * The shapes of a batch being stored and of the answer, shared by inbound-store.ts and the group
 * committer (group-commit.ts) so neither imports the other.
 */
import type { Continuity, Transport } from '@ebbgate/shared';
import type { MonitorForIngest } from '../devices/device-cache';
import type { MappedChannel } from './channel-mapping';
import type { ReceivedBatch } from './decoded-batch';

export interface StreamSettings {
  windowSeconds: number;
  stepSeconds: number;
  gapResetSeconds: number;
  /** Share transactions with concurrent batches (config ingest.groupCommit). */
  groupCommit?: boolean;
}

export interface StoredBatch {
  outcome: 'accepted' | 'duplicate';
  inboundMessageId: string;
  continuity: Continuity | null;
  continuityMs: number | null;
  windowsPlanned: number;
}

export interface StoreRequest {
  transport: Transport;
  receivedAt: Date;
  raw: Buffer;
  monitor: MonitorForIngest;
  batch: ReceivedBatch;
  channels: MappedChannel[];
  /** When reprocessing: the quarantined message whose row becomes the stored one. */
  reprocessOf?: string;
  handledBy?: string | null;
  /** Who sent it (senderLabel) and from where; a reprocessed message keeps its original sender. */
  sender?: string | null;
  sourceAddress?: string | null;
}
