import { Router } from 'express';
import { z } from 'zod';
import { edgeCredentialSchema, newEdgeCredentialSchema, type EdgeCredentialScope } from '@ebbgate/shared';
import { defineRoute } from '../http/route';
import type { AppContext } from '../app-context';
import { addEdgeCredential, listEdgeCredentials, removeEdgeCredential, type EdgeDirectory } from './edge-directory';

const scopeParam = z.object({ id: z.string().min(1).max(64) });
const credentialParam = scopeParam.extend({ credentialId: z.string().min(1).max(64) });

/**
 * Credentials the device edge accepts for a monitor or for every monitor of a profile: client
 * certificates (MLLP over TLS) and source addresses (plain MLLP). Issuing them is like issuing
 * an API key, so it takes the same permission.
 */
export function edgeCredentialsRouter(ctx: AppContext, dir: EdgeDirectory): Router {
  const router = Router();
  const tag = 'devices';
  for (const [scope, base] of [
    ['monitor', '/monitors'],
    ['profile', '/profiles'],
  ] as [EdgeCredentialScope, string][]) {
    defineRoute(router, {
      method: 'get',
      path: `${base}/:id/edge-credentials`,
      permission: 'monitors.keys',
      tag,
      summary: `Client certificates (SHA-256 fingerprint or subject) and plain-MLLP source addresses registered on the ${scope}`,
      params: scopeParam,
      response: z.array(edgeCredentialSchema),
      handler: (c) => listEdgeCredentials(ctx.ds, scope, c.params.id),
    });
    defineRoute(router, {
      method: 'post',
      path: `${base}/:id/edge-credentials`,
      permission: 'monitors.keys',
      tag,
      summary: `Register a client certificate (kind certificate-fingerprint: SHA-256, 64 hex digits; certificate-subject: RFC 4514 subject or CN) or a source address/CIDR (kind source) on the ${scope}; audited`,
      params: scopeParam,
      body: newEdgeCredentialSchema,
      response: edgeCredentialSchema,
      status: 201,
      handler: (c) => addEdgeCredential(ctx.ds, dir, scope, c.params.id, c.body, { principal: c.principal, requestId: String(c.req.id) }),
    });
    defineRoute(router, {
      method: 'delete',
      path: `${base}/:id/edge-credentials/:credentialId`,
      permission: 'monitors.keys',
      tag,
      summary: `Remove a credential from the ${scope}; audited`,
      params: credentialParam,
      handler: async (c) =>
        void (await removeEdgeCredential(ctx.ds, dir, scope, c.params.id, c.params.credentialId, { principal: c.principal, requestId: String(c.req.id) })),
    });
  }
  return router;
}
