import { Router } from 'express';
import { siteSettingsSchema } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { defineRoute } from '../http/route';
import { getSiteSettings, putSiteSettings } from './settings.service';

export function settingsRouter(ctx: AppContext): Router {
  const router = Router();
  defineRoute(router, {
    method: 'get',
    path: '/settings',
    permission: 'settings.read',
    tag: 'settings',
    summary: 'Site settings: decision bands with their sources, cycles per window, window length, delivery policy, alert recipients',
    response: siteSettingsSchema,
    handler: () => getSiteSettings(ctx),
  });
  defineRoute(router, {
    method: 'put',
    path: '/settings',
    permission: 'settings.write',
    tag: 'settings',
    summary: 'Replace the site settings (audited per section)',
    body: siteSettingsSchema,
    response: siteSettingsSchema,
    handler: ({ body, principal, req }) => putSiteSettings(ctx, body, { principal, requestId: String(req.id) }),
  });
  return router;
}
