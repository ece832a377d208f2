import { siteSettingsSchema, type SiteSettings } from '@ebbgate/shared';
import { DEFAULT_SETTINGS } from '@ebbgate/shared/analysis';
import type { AppContext, ChangeBy } from '../app-context';
import { recordAudit } from '../audit/audit.service';
import { SiteSettingRow } from './site-setting.entity';

type Section = keyof SiteSettings;
const SECTIONS: Section[] = ['analysis', 'delivery', 'alerts'];

/** Defaults: the engine's for analysis, config/default.json for the rest. */
export function defaultSiteSettings(ctx: AppContext): SiteSettings {
  const { analysis, delivery } = ctx.config;
  return {
    analysis: {
      cyclesToAverage: analysis.cyclesPerWindow ?? DEFAULT_SETTINGS.cyclesToAverage,
      windowSeconds: analysis.windowSeconds,
      bands: DEFAULT_SETTINGS.bands,
    },
    delivery: { observationStatus: delivery.observationStatus, notValidPolicy: delivery.notValidPolicy },
    alerts: {
      recipients: delivery.alerts.recipients,
      destinationDownMinutes: delivery.alerts.destinationDownMinutes,
      failureThreshold: delivery.alerts.failureThreshold,
    },
  };
}

/** Stored settings are re-read at most this often, so several gateway processes converge quickly. */
const CACHE_MS = 3_000;
const cache = new WeakMap<AppContext, { at: number; value: SiteSettings }>();

export async function getSiteSettings(ctx: AppContext): Promise<SiteSettings> {
  const hit = cache.get(ctx);
  if (hit && Date.now() - hit.at < CACHE_MS) return hit.value;
  const rows = await ctx.ds.getRepository(SiteSettingRow).find();
  const value = defaultSiteSettings(ctx);
  for (const row of rows) {
    if (!SECTIONS.includes(row.section as Section)) continue;
    const section = row.section as Section;
    const merged = { ...value[section], ...(row.value as object) };
    const parsed = siteSettingsSchema.shape[section].safeParse(merged);
    if (parsed.success) (value as Record<Section, unknown>)[section] = parsed.data;
    else ctx.logger.warn({ section, issues: parsed.error.issues }, 'stored site settings are invalid; using defaults for that section');
  }
  cache.set(ctx, { at: Date.now(), value });
  return value;
}

/** Replaces the site settings (whole object, validated by the route), audited section by section. */
export async function putSiteSettings(ctx: AppContext, next: SiteSettings, by: ChangeBy): Promise<SiteSettings> {
  const before = await getSiteSettings(ctx);
  await ctx.ds.transaction(async (m) => {
    for (const section of SECTIONS) {
      if (JSON.stringify(before[section]) === JSON.stringify(next[section])) continue;
      await m.save(SiteSettingRow, {
        section,
        value: next[section],
        updatedAt: new Date(),
        updatedBy: by.principal?.kind === 'user' ? by.principal.username : null,
      });
      await recordAudit(m, {
        principal: by.principal,
        action: 'settings.update',
        entityType: 'settings',
        entityId: section,
        before: before[section],
        after: next[section],
        requestId: by.requestId,
      });
    }
  });
  cache.delete(ctx);
  return getSiteSettings(ctx);
}
