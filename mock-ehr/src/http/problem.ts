import type { Response } from 'express';

/** RFC 9457 problem details, for the admin API (the FHIR API answers with OperationOutcome instead). */
export function sendProblem(res: Response, status: number, title: string, detail?: string, extra: Record<string, unknown> = {}): void {
  res
    .status(status)
    .type('application/problem+json')
    .send(JSON.stringify({ type: 'about:blank', title, status, ...(detail ? { detail } : {}), ...extra }));
}
