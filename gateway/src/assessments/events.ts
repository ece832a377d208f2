/**
 * Hooks other capabilities (delivery) register to, so they stay out of the analysis code:
 * - `stored`: runs inside the transaction that stores a new assessment (write the outbox row
 *   there and it commits, or rolls back, with the assessment).
 * - `markedInError`: runs inside the mark-in-error transaction (amended send).
 * - `deliveryStatus` / `observations`: fill `deliveryStatus` in lists and `observations` in the
 *   detail answer.
 * The lists belong to one gateway context, found by its DataSource (which every place that fires
 * a hook has at hand, also inside a transaction as `manager.connection`): several gateways in one
 * process (tests) never see each other's hooks.
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { AssessmentRow } from './assessment.entity';

export type AssessmentStoredHook = (manager: EntityManager, assessment: AssessmentRow) => Promise<void>;
export type AssessmentMarkedInErrorHook = (manager: EntityManager, assessment: AssessmentRow, reason: string) => Promise<void>;
export type DeliveryStatusProvider = (ds: DataSource, assessmentIds: string[]) => Promise<Map<string, string>>;
export type ObservationProvider = (ds: DataSource, assessmentId: string) => Promise<Record<string, unknown>[]>;

export interface AssessmentEvents {
  stored: AssessmentStoredHook[];
  markedInError: AssessmentMarkedInErrorHook[];
  deliveryStatus: DeliveryStatusProvider[];
  observations: ObservationProvider[];
}

const byDataSource = new WeakMap<DataSource, AssessmentEvents>();

/** The hooks of the gateway context that owns `ds` (created empty on first use). */
export function assessmentEvents(ds: DataSource): AssessmentEvents {
  let events = byDataSource.get(ds);
  if (!events) byDataSource.set(ds, (events = { stored: [], markedInError: [], deliveryStatus: [], observations: [] }));
  return events;
}
