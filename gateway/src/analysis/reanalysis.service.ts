import type { z } from 'zod';
import type { reanalysisAnswerSchema, reanalysisRequestSchema } from '@ebbgate/shared';
import { ENGINE_VERSION } from '@ebbgate/shared/analysis';
import type { AppContext, ChangeBy } from '../app-context';
import { recordAudit } from '../audit/audit.service';
import { requestReanalysis } from './analysis-worker';

/**
 * Queues stored windows analysed by an older engine for this gateway's engine, and audits the
 * request with how many were queued, in one transaction (no audit entry without the queueing).
 */
export async function queueReanalysis(
  ctx: AppContext,
  request: z.infer<typeof reanalysisRequestSchema>,
  by: ChangeBy,
): Promise<z.infer<typeof reanalysisAnswerSchema>> {
  return ctx.ds.transaction(async (m) => {
    const q = {
      engineVersion: ENGINE_VERSION,
      monitorId: request.monitorId,
      from: request.from ? new Date(request.from) : undefined,
      to: request.to ? new Date(request.to) : undefined,
    };
    const queued = await requestReanalysis(ctx, q, m);
    await recordAudit(m, {
      principal: by.principal,
      action: 'analysis.reanalyse',
      entityType: 'analysis-window',
      entityId: request.monitorId ?? null,
      after: { ...request, engineVersion: ENGINE_VERSION, queued },
      requestId: by.requestId,
    });
    return { engineVersion: ENGINE_VERSION, queued };
  });
}
