/**
 * Roster upload for a class: a CSV of names and e-mails. The preview reports
 * every line; the import is all-or-nothing (classes/roster.ts), and each new
 * student is e-mailed an invitation.
 */
import type { Request } from 'express';
import { classIdParamsSchema, ROSTER_MAX_BYTES } from '../../shared/api/classes.ts';
import { assertCanManageClass } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { badRequest } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { singleFileUpload, storedFileName } from '../http/uploads.ts';
import { parseParams } from '../http/validate.ts';
import { sendEnrolmentNotice, sendPasswordLink } from '../accounts/invitations.ts';
import { checkRoster, importRoster } from './roster.ts';

const STAFF = ['instructor', 'admin'] as const;

const rosterFile = singleFileUpload('file', { maxBytes: ROSTER_MAX_BYTES, what: 'The roster file' });

function requireFile(req: Request): { name: string; buffer: Buffer } {
  if (!req.file) throw badRequest('Attach the roster as a CSV file in the "file" field', { field: 'file' });
  return { name: storedFileName(req, 'file'), buffer: req.file.buffer };
}

export function rosterRoutes(ctx: AppContext) {
  const g = routeGroup('/api/classes');

  g.post('/:id/roster/preview', STAFF, rosterFile, async (req, res) => {
    const { id } = parseParams(classIdParamsSchema, req);
    await assertCanManageClass(ctx.db, currentUser(req), id);
    const file = requireFile(req);
    const { preview } = await checkRoster(ctx.db, id, file.name, file.buffer);
    res.json(preview);
  });

  g.post('/:id/roster', STAFF, rosterFile, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(classIdParamsSchema, req);
    const file = requireFile(req);
    const result = await importRoster(ctx.db, user, id, file);
    // Invitations go out once the import is committed; a failed send is logged and can be resent from the class page.
    let invited = 0;
    for (const student of result.created) {
      try {
        await sendPasswordLink(ctx, student, 'invite');
        invited++;
      } catch (err) {
        ctx.log('warn', `invitation to ${student.email} was not sent`, err);
      }
    }
    // Students who had an account are told they were added, as with a single enrolment.
    for (const student of result.existing) {
      try {
        await sendEnrolmentNotice(ctx, student, result.cls, user);
      } catch (err) {
        ctx.log('warn', `enrolment notice to ${student.email} was not sent`, err);
      }
    }
    res.status(201).json({ importId: result.importId, created: result.created.length, enrolled: result.enrolled, invited });
  });

  return g;
}
