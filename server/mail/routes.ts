/** The admin's view of mail sent and queued (/api/outbox). */
import type { AppContext } from '../context.ts';
import { routeGroup } from '../http/route-table.ts';
import { recentMail } from './outbox.ts';

export function outboxRoutes(ctx: AppContext) {
  const g = routeGroup('/api/outbox');
  g.get('/', ['admin'], async (_req, res) => {
    res.json({ messages: await recentMail(ctx.db) });
  });
  return g;
}
