import type { Router } from 'express';
import type { AppContext, BackgroundService } from '../app-context';
import { AnalysisWorker } from './analysis-worker';
import { analysisRouter } from './analysis.router';
import { assessmentsRouter } from '../assessments/assessments.router';

export interface AnalysisCapability {
  worker: AnalysisWorker;
  routers: Router[];
  services: BackgroundService[];
}

export function buildAnalysis(ctx: AppContext): AnalysisCapability {
  const worker = new AnalysisWorker(ctx);
  return { worker, routers: [analysisRouter(ctx), assessmentsRouter(ctx)], services: ctx.config.analysis.workerEnabled ? [worker] : [] };
}
