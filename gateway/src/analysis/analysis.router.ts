import { Router } from 'express';
import multer from 'multer';
import { previewFieldsSchema, previewResultSchema, reanalysisAnswerSchema, reanalysisRequestSchema } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { badRequest } from '../http/problem';
import { defineRoute } from '../http/route';
import { previewCapture } from './preview.service';
import { queueReanalysis } from './reanalysis.service';

export function analysisRouter(ctx: AppContext): Router {
  const router = Router();
  const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: ctx.config.analysis.previewMaxBytes, files: 1, fields: 5 } });
  defineRoute(router, {
    method: 'post',
    path: '/analysis/preview',
    permission: 'analysis.preview',
    tag: 'analysis',
    summary:
      'Test bench: upload a capture (JSON batch, CSV or HL7 file, field "file") and optionally a profileId; get the parse report and the full analysis. Nothing is stored.',
    before: [upload.single('file')],
    bodyType: 'multipart/form-data',
    body: previewFieldsSchema,
    response: previewResultSchema,
    handler: ({ req, body }) => {
      if (!req.file) throw badRequest('Attach the capture as the multipart field "file".', [{ path: 'file', message: 'required' }]);
      return previewCapture(ctx, req.file, body.profileId);
    },
  });
  defineRoute(router, {
    method: 'post',
    path: '/analysis/reanalyse',
    permission: 'analysis.reanalyse',
    tag: 'analysis',
    summary:
      "Queue stored windows analysed by an older engine for analysis with this gateway's engine (optionally one monitor, a time range). Earlier assessments stay beside the new ones.",
    body: reanalysisRequestSchema,
    response: reanalysisAnswerSchema,
    status: 202,
    handler: ({ body, principal, req }) => queueReanalysis(ctx, body, { principal, requestId: String(req.id) }),
  });
  return router;
}
