import { redirect } from 'react-router-dom';
import type { Role } from '../../../shared/api/auth.ts';
import { meQueryOptions } from '../../features/auth/api/get-me.ts';
import { paths } from '../../config/paths.ts';
import { queryClient } from '../../lib/query-client.ts';
import { homeFor } from '../nav.ts';

/** A loader that sends other roles to their own start page (the server enforces the same). */
export const roleLoader = (...roles: Role[]) =>
  async function loader() {
    const me = await queryClient.ensureQueryData(meQueryOptions());
    if (!me.user) throw redirect(paths.signIn.href());
    if (!roles.includes(me.user.role)) throw redirect(homeFor(me.user.role));
    return null;
  };
