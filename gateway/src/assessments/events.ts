import type { EntityManager } from 'typeorm';
import type { AssessmentRow } from './assessment.entity';

/**
 * Hooks other capabilities register to, called inside the transaction that stores or amends an
 * assessment (so, e.g., outbox rows commit together with the assessment they deliver).
 */
export type AssessmentHook = (manager: EntityManager, assessment: AssessmentRow) => Promise<void>;

/** Called after a new assessment row is inserted. */
export const onAssessmentStored: AssessmentHook[] = [];

/** Called after an assessment is marked entered in error (entered_in_error_* set). */
export const onAssessmentMarkedInError: AssessmentHook[] = [];
