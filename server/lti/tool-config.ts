/** The addresses a platform's admin pastes when adding Loadline, and Loadline's public address they are built on. */
import type { ToolConfig } from '../../shared/api/lti.ts';
import type { AppContext } from '../context.ts';
import { listKeys } from './keys.ts';

/**
 * Loadline's public address: PUBLIC_URL, never the address a request claims
 * to have come to (a forged Host header must not move a launch or a
 * deep-linking answer elsewhere).
 */
export function toolBase(ctx: AppContext): string {
  return ctx.env.PUBLIC_URL.replace(/\/+$/, '');
}

export async function toolConfig(ctx: AppContext): Promise<ToolConfig> {
  const base = toolBase(ctx);
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
