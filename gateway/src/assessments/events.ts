/**
 * Hooks other capabilities (delivery) register to, so they stay out of the analysis code:
 * - `onAssessmentStored`: runs inside the transaction that stores a new assessment (write the
 *   outbox row there and it commits, or rolls back, with the assessment).
 * - `onAssessmentMarkedInError`: runs inside the mark-in-error transaction (amended send).
 * - `deliveryStatusProviders` / `observationProviders`: fill `deliveryStatus` in lists and
 *   `observations` in the detail answer.
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { AssessmentRow } from './assessment.entity';

export type AssessmentStoredHook = (manager: EntityManager, assessment: AssessmentRow) => Promise<void>;
export type AssessmentMarkedInErrorHook = (manager: EntityManager, assessment: AssessmentRow, reason: string) => Promise<void>;
export type DeliveryStatusProvider = (ds: DataSource, assessmentIds: string[]) => Promise<Map<string, string>>;
export type ObservationProvider = (ds: DataSource, assessmentId: string) => Promise<Record<string, unknown>[]>;

export const onAssessmentStored: AssessmentStoredHook[] = [];
export const onAssessmentMarkedInError: AssessmentMarkedInErrorHook[] = [];
export const deliveryStatusProviders: DeliveryStatusProvider[] = [];
export const observationProviders: ObservationProvider[] = [];
