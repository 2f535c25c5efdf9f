import { redirect, type LoaderFunctionArgs } from 'react-router-dom';
import type { Role, SessionUser } from '../../../shared/api/auth.ts';
import { meQueryOptions } from '../../features/auth/api/get-me.ts';
import { paths } from '../../config/paths.ts';
import { queryClient } from '../../lib/query-client.ts';
import { homeFor } from '../nav.ts';

/** The signed-in user, or a redirect to sign-in that comes back here. Loaders run in parallel, so each asks. */
export async function requireSignedIn(request: Request): Promise<SessionUser> {
  const me = await queryClient.ensureQueryData(meQueryOptions());
  if (!me.user) {
    const url = new URL(request.url);
    throw redirect(paths.signIn.href(url.pathname === '/' ? undefined : url.pathname + url.search));
  }
  return me.user;
}

/** A loader that sends other roles to their own start page (the server enforces the same). */
export const roleLoader = (...roles: Role[]) =>
  async function loader({ request }: LoaderFunctionArgs) {
    const user = await requireSignedIn(request);
    if (!roles.includes(user.role)) throw redirect(homeFor(user.role));
    return null;
  };
