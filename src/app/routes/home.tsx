import { redirect } from 'react-router-dom';
import { meQueryOptions } from '../../features/auth/api/get-me.ts';
import { paths } from '../../config/paths.ts';
import { queryClient } from '../../lib/query-client.ts';
import { homeFor } from '../nav.ts';

/** The start page is the first entry of the role's navigation. */
export async function homeLoader() {
  const me = await queryClient.ensureQueryData(meQueryOptions());
  throw redirect(me.user ? homeFor(me.user.role) : paths.signIn.href());
}
