/**
 * Roster upload for a class, the domain's part: reading a CSV of names and
 * e-mails against the class and the accounts that exist, and the
 * all-or-nothing import (a single bad line imports nothing and is named).
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import Papa from 'papaparse';
import type { SessionUser } from '../../shared/api/auth.ts';
import { emailSchema } from '../../shared/api/auth.ts';
import { nameSchema } from '../../shared/api/users.ts';
import { ROSTER_MAX_ROWS, type RosterPreview, type RosterRow } from '../../shared/api/classes.ts';
import { assertCanManageClass } from '../accounts/access.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { enrollments, rosterImports, users } from '../db/schema.ts';
import { badRequest, conflict, HttpError } from '../http/errors.ts';
import { NOT_A_STUDENT } from './queries.ts';

interface ParsedLine {
  line: number;
  cells: string[];
}

/** CSV records with the file line each starts on (a quoted field may span lines). */
export function csvLines(text: string): ParsedLine[] {
  const out: ParsedLine[] = [];
  let start = 0;
  let line = 1;
  let counted = 0;
  Papa.parse<string[]>(text, {
    skipEmptyLines: false,
    step(result) {
      for (let i = counted; i < start; i++) if (text.charCodeAt(i) === 10) line++;
      counted = start;
      out.push({ line, cells: result.data.map((c) => String(c ?? '')) });
      start = result.meta.cursor;
    },
  });
  return out;
}

const NAME_HEADERS = ['name', 'full name', 'student name', 'student'];
const FIRST_HEADERS = ['first name', 'first', 'given name'];
const LAST_HEADERS = ['last name', 'last', 'surname', 'family name'];
const EMAIL_HEADERS = ['email', 'e-mail', 'email address', 'e-mail address'];

const norm = (h: string) => h.trim().toLowerCase().replace(/[_\s]+/g, ' ');

interface CheckedRow extends RosterRow {
  userId?: number;
}

/** Reads and checks a roster against the class and the accounts that exist; writes nothing. */
export async function checkRoster(db: DbOrTx, classId: number, fileName: string, buffer: Buffer): Promise<{ preview: RosterPreview; rows: CheckedRow[] }> {
  const text = buffer.toString('utf8').replace(/^\uFEFF/, '');
  const records = csvLines(text).filter((r) => r.cells.some((c) => c.trim() !== ''));
  const header = records.shift();
  if (!header) throw badRequest('The roster file is empty: put a header line "name,email" and one line per student', { field: 'file', line: 1 });
  const heads = header.cells.map(norm);
  const col = (names: string[]) => heads.findIndex((h) => names.includes(h));
  const nameCol = col(NAME_HEADERS);
  const firstCol = col(FIRST_HEADERS);
  const lastCol = col(LAST_HEADERS);
  const emailCol = col(EMAIL_HEADERS);
  if (emailCol < 0 || (nameCol < 0 && (firstCol < 0 || lastCol < 0))) {
    throw badRequest(`Line ${header.line}: the header must name the columns "name" and "email" (or "first name", "last name" and "email")`, {
      field: 'file',
      line: header.line,
      issues: [{ path: `line ${header.line}`, message: 'Header must name the columns name and email' }],
    });
  }
  if (records.length === 0) throw badRequest('The roster file has a header but no students', { field: 'file', line: header.line + 1 });
  if (records.length > ROSTER_MAX_ROWS) throw badRequest(`A roster holds at most ${ROSTER_MAX_ROWS} students; this one has ${records.length}`, { field: 'file' });

  const rows: CheckedRow[] = records.map((r) => {
    const cell = (i: number) => (i >= 0 ? (r.cells[i] ?? '').trim() : '');
    // More values than the header names: most often a name with an unquoted comma, so the values are not where they seem.
    if (r.cells.length > header.cells.length) {
      return {
        line: r.line,
        name: '',
        email: '',
        status: 'error',
        message: `This line has ${r.cells.length} values but the header names ${header.cells.length} columns; put a name that holds a comma in double quotes`,
      };
    }
    const name = (nameCol >= 0 ? cell(nameCol) : `${cell(firstCol)} ${cell(lastCol)}`).replace(/ {2,}/g, ' ').trim();
    const rawEmail = cell(emailCol);
    const row: CheckedRow = { line: r.line, name, email: rawEmail.toLowerCase(), status: 'new' };
    // The same rule as every other name (shared/api/users.ts): the first thing wrong with it is the line's message.
    const checked = nameSchema.safeParse(name);
    if (!checked.success) return { ...row, status: 'error', message: checked.error.issues[0]?.message ?? 'The name is not valid' };
    if (!rawEmail) return { ...row, status: 'error', message: 'The e-mail is missing' };
    const email = emailSchema.safeParse(rawEmail);
    if (!email.success) return { ...row, status: 'error', message: `“${rawEmail}” is not a valid e-mail address` };
    return { ...row, email: email.data };
  });

  const firstLine = new Map<string, number>();
  for (const row of rows) {
    if (row.status === 'error') continue;
    const seen = firstLine.get(row.email);
    if (seen !== undefined) Object.assign(row, { status: 'error', message: `The same e-mail as line ${seen}` });
    else firstLine.set(row.email, row.line);
  }

  const emails = rows.filter((r) => r.status !== 'error').map((r) => r.email);
  const accounts = emails.length
    ? await db.select({ id: users.id, email: users.email, role: users.role }).from(users).where(inArray(sql`lower(${users.email})`, emails))
    : [];
  const enrolled = new Set(
    accounts.length
      ? (
          await db
            .select({ userId: enrollments.userId })
            .from(enrollments)
            .where(and(eq(enrollments.classId, classId), inArray(enrollments.userId, accounts.map((a) => a.id))))
        ).map((e) => e.userId)
      : [],
  );
  for (const row of rows) {
    if (row.status === 'error') continue;
    const account = accounts.find((a) => a.email.toLowerCase() === row.email);
    if (!account) continue;
    if (account.role !== 'student') Object.assign(row, { status: 'error', message: NOT_A_STUDENT });
    else Object.assign(row, { status: enrolled.has(account.id) ? 'enrolled' : 'existing', userId: account.id });
  }

  const count = (s: RosterRow['status']) => rows.filter((r) => r.status === s).length;
  return {
    rows,
    preview: {
      fileName,
      rows: rows.map(({ userId: _userId, ...r }) => r),
      errorCount: count('error'),
      newCount: count('new'),
      existingCount: count('existing'),
      alreadyEnrolledCount: count('enrolled'),
    },
  };
}

const isUniqueViolation = (err: unknown) => (err as { code?: string }).code === '23505' || (err as { cause?: { code?: string } }).cause?.code === '23505';

/**
 * Imports a checked roster in one transaction: creates the new students,
 * enrols new and existing ones, and records the import. Throws, importing
 * nothing, when any line is bad.
 */
export async function importRoster(db: Db, user: SessionUser, classId: number, file: { name: string; buffer: Buffer }) {
  try {
    return await db.transaction(async (tx) => {
      const cls = await assertCanManageClass(tx, user, classId);
      const { rows, preview } = await checkRoster(tx, classId, file.name, file.buffer);
      const bad = rows.filter((r) => r.status === 'error');
      if (bad.length) {
        const first = bad[0]!;
        throw badRequest(`Line ${first.line}: ${first.message}${bad.length > 1 ? ` (and ${bad.length - 1} more bad lines)` : ''}; nothing was imported`, {
          field: 'file',
          line: first.line,
          issues: bad.map((r) => ({ path: `line ${r.line}`, message: r.message ?? 'Bad line' })),
        });
      }
      const fresh = rows.filter((r) => r.status === 'new');
      const created = fresh.length
        ? await tx
            .insert(users)
            .values(fresh.map((r) => ({ email: r.email, name: r.name, role: 'student' as const })))
            .returning({ id: users.id, email: users.email, name: users.name })
        : [];
      const existingIds = rows.filter((r) => r.status === 'existing').map((r) => r.userId!);
      const existing = existingIds.length ? await tx.select({ id: users.id, email: users.email, name: users.name }).from(users).where(inArray(users.id, existingIds)) : [];
      const toEnrol = [...created.map((c) => c.id), ...existingIds];
      if (toEnrol.length) await tx.insert(enrollments).values(toEnrol.map((userId) => ({ classId, userId }))).onConflictDoNothing();
      const [imp] = await tx
        .insert(rosterImports)
        .values({ classId, importedBy: user.id, fileName: file.name, rowCount: rows.length, createdCount: created.length, enrolledCount: toEnrol.length })
        .returning({ id: rosterImports.id });
      if (!imp) throw new HttpError(500, 'Roster import was not recorded');
      return { importId: imp.id, created, existing, cls, enrolled: toEnrol.length, preview };
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw conflict('Another import added one of these e-mails at the same moment; preview the file again', 'file');
    throw err;
  }
}
