/** The addresses a platform's admin pastes when adding Loadline, and Loadline's public address they are built on. */
import type { Request } from 'express';
import type { ToolConfig } from '../../shared/api/lti.ts';
import type { AppContext } from '../context.ts';
import { listKeys } from './keys.ts';

/**
 * Loadline's public address: APP_URL when set (it must be, behind a proxy
 * that rewrites the host), else the address this request came to.
 */
export function toolBase(ctx: AppContext, req: Request): string {
  if (ctx.env.APP_URL) return ctx.env.APP_URL.replace(/\/+$/, '');
  return `${req.protocol}://${req.get('host') ?? 'localhost'}`;
}

export async function toolConfig(ctx: AppContext, req: Request): Promise<ToolConfig> {
  const base = toolBase(ctx, req);
  return {
    loginUrl: `${base}/lti/login`,
    redirectUrl: `${base}/lti/launch`,
    jwksUrl: `${base}/lti/jwks.json`,
    deepLinkingUrl: `${base}/lti/deep-linking`,
    targetLinkUri: `${base}/lti/launch`,
    domain: new URL(base).host,
    keys: await listKeys(ctx.db),
  };
}
