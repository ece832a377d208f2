/**
 * The delivery capability composed: hooks on stored / marked-in-error assessments, the outbox
 * worker per destination, the alert watcher, the operator routes and a non-critical EHR check.
 */
import type { Router } from 'express';
import type { AppContext, BackgroundService, ReadinessCheck } from '../app-context';
import { assessmentEvents } from '../assessments/events';
import type { Metrics } from '../http/metrics';
import { bedReassigned } from '../devices/beds.service';
import { getSiteSettings } from '../settings/settings.service';
import { AlertWatcher } from './alert-watcher';
import { defaultCodeMap, type CodeMap } from './code-map';
import { deliveriesRouter } from './deliveries.router';
import { DeliveryWorker, type DestinationHandler } from './delivery-worker';
import { DeviceSync } from './device-sync';
import { EhrClient } from './ehr-client';
import { FhirDestination, type DeliveryPolicy } from './fhir-destination';
import { Hl7Destination } from './hl7-destination';
import { assessmentDeliveryStatus, assessmentObservations } from './assessment-view';
import { enqueueAssessment, markAssessmentInError, syncDestinations, type DestinationSpec } from './outbox';
import { PatientContextResolver } from './patient-context';

export const FHIR_DESTINATION_ID = 'ehr-fhir';
export const HL7_DESTINATION_ID = 'ehr-hl7v2';

export interface DeliveryParts {
  routers: Router[];
  readiness: ReadinessCheck[];
  services: BackgroundService[];
  worker: DeliveryWorker;
  ehr: EhrClient;
  contexts: PatientContextResolver;
}

export function destinationSpecs(ctx: AppContext): DestinationSpec[] {
  const specs: DestinationSpec[] = [{ id: FHIR_DESTINATION_ID, name: 'EHR (FHIR R4)', kind: 'fhir' }];
  if (ctx.config.delivery.hl7.enabled) specs.push({ id: HL7_DESTINATION_ID, name: 'EHR (HL7 v2 ORU^R01 over MLLP)', kind: 'hl7v2-mllp' });
  return specs;
}

export function buildDelivery(ctx: AppContext, metrics?: Metrics, codes: CodeMap = defaultCodeMap()): DeliveryParts {
  const cfg = ctx.config.delivery;
  const specs = destinationSpecs(ctx);
  let synced: Promise<void> | undefined;
  const ensureDestinations = () =>
    (synced ??= syncDestinations(ctx.ds, specs).catch((err) => {
      synced = undefined;
      throw err;
    }));
  const policy = async (): Promise<DeliveryPolicy> => (await getSiteSettings(ctx)).delivery;

  const events = assessmentEvents(ctx.ds);
  events.stored.push(async (m, a) => {
    await ensureDestinations();
    await enqueueAssessment(
      m,
      a,
      specs.map((s) => s.id),
      codes,
      (await policy()).notValidPolicy,
    );
  });
  events.markedInError.push((m, a) => markAssessmentInError(m, a));
  events.deliveryStatus.push(assessmentDeliveryStatus);
  events.observations.push(assessmentObservations);

  const ehr = new EhrClient({ ...ctx.config.ehr, requestTimeoutMs: cfg.requestTimeoutMs });
  const contexts = new PatientContextResolver(ehr, cfg.patientContext.cacheSeconds * 1000);
  // A bed changed (another location, or removed): its cached patient context no longer holds.
  bedReassigned.push((locations) => locations.forEach((l) => contexts.drop(l)));
  const handlers = new Map<string, DestinationHandler>([
    [FHIR_DESTINATION_ID, new FhirDestination(ctx.ds, ehr, contexts, new DeviceSync(ehr, codes), codes, cfg, policy)],
  ]);
  if (cfg.hl7.enabled) handlers.set(HL7_DESTINATION_ID, new Hl7Destination(ctx.ds, contexts, ehr, codes, cfg, policy));
  const attempts = metrics?.counter('ebbgate_delivery_attempts_total', 'Delivery attempts by destination and outcome', ['destination', 'outcome']);
  const expired = metrics?.counter(
    'ebbgate_delivery_claims_expired_total',
    'Outbox rows claimed again after an earlier claim ran out (a dead or overrunning worker)',
    ['destination'],
  );
  const refused = metrics?.counter('ebbgate_delivery_fencing_refusals_total', 'Results or sends refused because their claim no longer held the row', [
    'destination',
  ]);
  metrics?.gauge(
    'ebbgate_delivery_lag_seconds',
    'Per destination: age of the oldest result not yet delivered, failed or set aside (0 when none)',
    ['destination'],
    async (g) => {
      g.reset();
      const rows = (await ctx.ds.query(
        `SELECT destination_id AS d, MIN(created_at) AS oldest FROM delivery WHERE status IN ('pending','waiting-context') GROUP BY destination_id`,
      )) as { d: string; oldest: Date | string }[];
      for (const s of specs) {
        const r = rows.find((x) => x.d === s.id);
        g.set({ destination: s.id }, r ? Math.max(0, (Date.now() - new Date(r.oldest).getTime()) / 1000) : 0);
      }
    },
  );
  const worker = new DeliveryWorker(ctx.ds, handlers, cfg, ctx.logger, (destination, report, facts) => {
    for (const r of report.results) attempts?.inc({ destination, outcome: r.outcome });
    if (facts.claimsExpired) expired?.inc({ destination }, facts.claimsExpired);
    if (facts.fencingRefusals) refused?.inc({ destination }, facts.fencingRefusals);
  });
  const alerts = new AlertWatcher(ctx, async () => (await getSiteSettings(ctx)).alerts);

  const setup: BackgroundService = { name: 'delivery-destinations', start: () => ensureDestinations(), stop: async () => {} };
  const services: BackgroundService[] = [setup, worker, ...(cfg.alerts.enabled ? [alerts] : [])];
  const readiness: ReadinessCheck[] = [
    {
      name: 'ehr',
      critical: false,
      check: async () => {
        const res = await fetch(`${ctx.config.ehr.fhirBaseUrl.replace(/\/$/, '')}/metadata`, {
          signal: AbortSignal.timeout(2000),
          headers: { accept: 'application/fhir+json' },
        });
        if (!res.ok) throw new Error(`the EHR answered ${res.status} for /metadata`);
      },
    },
  ];
  return { routers: [deliveriesRouter(ctx)], readiness, services, worker, ehr, contexts };
}
