import { Router } from 'express';
import {
  apiKeyIssuedSchema,
  bedInputSchema,
  bedQuerySchema,
  bedSchema,
  createMonitorSchema,
  idParam,
  monitorProfileInputSchema,
  monitorProfileSchema,
  pageOf,
  profileQuerySchema,
  monitorQuerySchema,
  monitorSchema,
  updateBedSchema,
  updateMonitorSchema,
} from '@ebbgate/shared';
import type { AppContext, ChangeBy } from '../app-context';
import { defineRoute, type RouteContext } from '../http/route';
import { createBed, deleteBed, getBed, listBeds, updateBed } from './beds.service';
import { issueMonitorKey, revokeMonitorKey } from './monitor-keys.service';
import { createMonitor, deleteMonitor, getMonitor, listMonitors, updateMonitor } from './monitors.service';
import { createProfile, deleteProfile, getProfile, listProfiles, replaceProfile } from './profiles.service';

const by = (c: RouteContext<unknown, unknown, unknown>): ChangeBy => ({ principal: c.principal, requestId: String(c.req.id) });

/** Monitor profiles, monitors (with their API keys) and beds. */
export function devicesRouter(ctx: AppContext): Router {
  const router = Router();
  const { ds } = ctx;
  const tag = 'devices';

  defineRoute(router, {
    method: 'get',
    path: '/profiles',
    permission: 'profiles.read',
    tag,
    summary: 'List monitor profiles (paged; search, sort)',
    query: profileQuerySchema,
    response: pageOf(monitorProfileSchema),
    handler: (c) => listProfiles(ds, c.query),
  });
  defineRoute(router, {
    method: 'post',
    path: '/profiles',
    permission: 'profiles.write',
    tag,
    summary: 'Create a monitor profile',
    body: monitorProfileInputSchema,
    response: monitorProfileSchema,
    status: 201,
    handler: (c) => createProfile(ds, c.body, by(c)),
  });
  defineRoute(router, {
    method: 'get',
    path: '/profiles/:id',
    permission: 'profiles.read',
    tag,
    summary: 'One monitor profile',
    params: idParam,
    response: monitorProfileSchema,
    handler: (c) => getProfile(ds, c.params.id),
  });
  defineRoute(router, {
    method: 'put',
    path: '/profiles/:id',
    permission: 'profiles.write',
    tag,
    summary: 'Replace a monitor profile',
    params: idParam,
    body: monitorProfileInputSchema,
    response: monitorProfileSchema,
    handler: (c) => replaceProfile(ds, c.params.id, c.body, by(c)),
  });
  defineRoute(router, {
    method: 'delete',
    path: '/profiles/:id',
    permission: 'profiles.write',
    tag,
    summary: 'Delete an unused monitor profile',
    params: idParam,
    handler: async (c) => void (await deleteProfile(ds, c.params.id, by(c))),
  });

  defineRoute(router, {
    method: 'get',
    path: '/monitors',
    permission: 'monitors.read',
    tag,
    summary: 'List monitors with last seen and data rate (paged; filters, sort)',
    query: monitorQuerySchema,
    response: pageOf(monitorSchema),
    handler: (c) => listMonitors(ds, c.query),
  });
  defineRoute(router, {
    method: 'post',
    path: '/monitors',
    permission: 'monitors.write',
    tag,
    summary: 'Register a monitor',
    body: createMonitorSchema,
    response: monitorSchema,
    status: 201,
    handler: (c) => createMonitor(ds, c.body, by(c)),
  });
  defineRoute(router, {
    method: 'get',
    path: '/monitors/:id',
    permission: 'monitors.read',
    tag,
    summary: 'One monitor',
    params: idParam,
    response: monitorSchema,
    handler: (c) => getMonitor(ds, c.params.id),
  });
  defineRoute(router, {
    method: 'patch',
    path: '/monitors/:id',
    permission: 'monitors.write',
    tag,
    summary: 'Change a monitor (identifier, profile, bed, enabled)',
    params: idParam,
    body: updateMonitorSchema,
    response: monitorSchema,
    handler: (c) => updateMonitor(ds, c.params.id, c.body, by(c)),
  });
  defineRoute(router, {
    method: 'delete',
    path: '/monitors/:id',
    permission: 'monitors.write',
    tag,
    summary: 'Delete a monitor without assessments',
    params: idParam,
    handler: async (c) => void (await deleteMonitor(ds, c.params.id, by(c))),
  });
  defineRoute(router, {
    method: 'post',
    path: '/monitors/:id/api-key',
    permission: 'monitors.keys',
    tag,
    summary: 'Issue a new API key for the monitor (shown once; revokes the previous one)',
    params: idParam,
    response: apiKeyIssuedSchema,
    status: 201,
    handler: (c) => issueMonitorKey(ctx, c.params.id, by(c)),
  });
  defineRoute(router, {
    method: 'delete',
    path: '/monitors/:id/api-key',
    permission: 'monitors.keys',
    tag,
    summary: "Revoke the monitor's API key",
    params: idParam,
    handler: async (c) => void (await revokeMonitorKey(ctx, c.params.id, by(c))),
  });

  defineRoute(router, {
    method: 'get',
    path: '/beds',
    permission: 'beds.read',
    tag,
    summary: 'List beds (paged; unit, search, sort)',
    query: bedQuerySchema,
    response: pageOf(bedSchema),
    handler: (c) => listBeds(ds, c.query),
  });
  defineRoute(router, {
    method: 'post',
    path: '/beds',
    permission: 'beds.write',
    tag,
    summary: 'Create a bed with its EHR Location identifier',
    body: bedInputSchema,
    response: bedSchema,
    status: 201,
    handler: (c) => createBed(ds, c.body, by(c)),
  });
  defineRoute(router, {
    method: 'get',
    path: '/beds/:id',
    permission: 'beds.read',
    tag,
    summary: 'One bed',
    params: idParam,
    response: bedSchema,
    handler: (c) => getBed(ds, c.params.id),
  });
  defineRoute(router, {
    method: 'patch',
    path: '/beds/:id',
    permission: 'beds.write',
    tag,
    summary: 'Change a bed',
    params: idParam,
    body: updateBedSchema,
    response: bedSchema,
    handler: (c) => updateBed(ds, c.params.id, c.body, by(c)),
  });
  defineRoute(router, {
    method: 'delete',
    path: '/beds/:id',
    permission: 'beds.write',
    tag,
    summary: 'Delete a bed (its monitor is left without a bed)',
    params: idParam,
    handler: async (c) => void (await deleteBed(ds, c.params.id, by(c))),
  });
  return router;
}
