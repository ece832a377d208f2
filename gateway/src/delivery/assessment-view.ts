/** What the assessments API shows of delivery: a status per assessment and the Observations as sent. */
import type { DataSource } from 'typeorm';
import { In } from 'typeorm';
import { DeliveryRow } from './delivery.entities';
import { toDelivery } from './deliveries.service';

/** The one status a reviewer needs: the worst of the assessment's rows (failed first). */
const RANK = ['failed', 'waiting-context', 'pending', 'delivered', 'withheld', 'discarded'];

export async function assessmentDeliveryStatus(ds: DataSource, ids: string[]): Promise<Map<string, string>> {
  const out = new Map<string, string>();
  if (!ids.length) return out;
  const rows = (await ds.query(
    `SELECT assessment_id AS a, status AS s FROM delivery WHERE assessment_id IN (?) AND kind = 'create' GROUP BY assessment_id, status`,
    [ids],
  )) as { a: string; s: string }[];
  for (const r of rows) {
    const cur = out.get(r.a);
    if (!cur || RANK.indexOf(r.s) < RANK.indexOf(cur)) out.set(r.a, r.s);
  }
  return out;
}

export async function assessmentObservations(ds: DataSource, assessmentId: string): Promise<Record<string, unknown>[]> {
  const rows = await ds.getRepository(DeliveryRow).find({ where: { assessmentId, kind: In(['create', 'amend']) }, order: { id: 'ASC' } });
  const byIndex = new Map<string, DeliveryRow[]>();
  for (const r of rows) byIndex.set(r.indexName, [...(byIndex.get(r.indexName) ?? []), r]);
  return [...byIndex.entries()].map(([index, list]) => ({
    index,
    // The FHIR resource as sent (the first FHIR create row that has a payload).
    resource: list.find((r) => r.kind === 'create' && r.payload && (r.payload as { resourceType?: string }).resourceType)?.payload ?? null,
    deliveries: list.map(toDelivery),
  }));
}
