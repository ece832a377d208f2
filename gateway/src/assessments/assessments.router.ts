import { Router } from 'express';
import { assessmentDetailSchema, assessmentQuerySchema, assessmentSummarySchema, idParam, markInErrorSchema, pageOf } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import { getAssessment, listAssessments, markInError } from './assessments.service';

export function assessmentsRouter(ctx: AppContext): Router {
  const router = Router();
  const tag = 'assessments';
  defineRoute(router, {
    method: 'get',
    path: '/assessments',
    permission: 'assessments.read',
    tag,
    summary: 'Assessments filtered by monitor, bed, patient, verdict, flag, index and time, paginated',
    query: assessmentQuerySchema,
    response: pageOf(assessmentSummarySchema),
    handler: ({ query }) => listAssessments(ctx.ds, query),
  });
  defineRoute(router, {
    method: 'get',
    path: '/assessments/:id',
    permission: 'assessments.read',
    tag,
    summary: 'One assessment: full engine result, the waveform excerpt (same time base as beats and cycles), observations',
    params: idParam,
    response: assessmentDetailSchema,
    handler: ({ params, principal, req }) => getAssessment(ctx.ds, params.id, { principal, requestId: String(req.id) }),
  });
  defineRoute(router, {
    method: 'post',
    path: '/assessments/:id/mark-in-error',
    permission: 'assessments.mark-in-error',
    tag,
    summary: 'Mark a result entered in error, with a reason (the EHR copy is amended by delivery)',
    params: idParam,
    body: markInErrorSchema,
    response: assessmentSummarySchema,
    handler: ({ params, body, principal, req }) => markInError(ctx.ds, params.id, body.reason, { principal, requestId: String(req.id) }),
  });
  return router;
}
