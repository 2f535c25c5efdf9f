/**
 * The demo library and classes: every scenario file in scenarios/ (restored and
 * checked against the shared schema, published as version 1), two classes of the
 * demo school with their students, and a few assignments around today.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { inArray } from 'drizzle-orm';
import { formatIssues, safeRestoreScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import { insertScenario } from '../library/store.ts';
import type { Db } from '../db/client.ts';
import { DEMO_PEOPLE } from '../db/demo-people.ts';
import { assignments, classes, classInstructors, enrollments, users } from '../db/schema.ts';

export const SCENARIO_DIR = fileURLToPath(new URL('../../scenarios/', import.meta.url));

export interface LibraryFile {
  file: string;
  slug: string;
  definition: ScenarioDefinition;
}

/** Every file of the demo library, parsed; throws naming the file and path of the first bad field. */
export function readLibrary(dir = SCENARIO_DIR): LibraryFile[] {
  return readdirSync(dir)
    .filter((f) => f.endsWith('.json'))
    .sort()
    .map((file) => {
      const r = safeRestoreScenario(JSON.parse(readFileSync(`${dir}${file}`, 'utf8')) as unknown);
      if (!r.success) {
        const issue = formatIssues(r.error)[0];
        throw new Error(`scenarios/${file}: ${issue?.path}: ${issue?.message}`);
      }
      return { file, slug: file.replace(/\.json$/, ''), definition: r.data };
    });
}

const students = DEMO_PEOPLE.filter((p) => p.role === 'student').map((p) => p.email);
const [firstInstructor, secondInstructor] = DEMO_PEOPLE.filter((p) => p.role === 'instructor').map((p) => p.email);

/** Library files the second instructor owns; the last of them is kept private and unpublished. */
const SECOND_OWNS = ['post-corroded-fairlow-tern', 'weak-battery-and-draw-gannet-sound', 'intermittent-bplus-pike-hollow'];

const DAY = 24 * 60 * 60 * 1000;

export async function seedLibrary(db: Db, now = new Date()): Promise<void> {
  const library = readLibrary();
  await db.transaction(async (tx) => {
    const people = await tx.select({ id: users.id, email: users.email }).from(users).where(inArray(users.email, DEMO_PEOPLE.map((p) => p.email)));
    const idOf = (email: string | undefined) => {
      const id = people.find((p) => p.email === email)?.id;
      if (id === undefined) throw new Error(`demo person ${email} is missing`);
      return id;
    };
    const versionOf = new Map<string, number>();
    for (const item of library) {
      const second = SECOND_OWNS.includes(item.slug);
      const isPrivate = item.slug === SECOND_OWNS.at(-1);
      const { versionId } = await insertScenario(tx, {
        definition: item.definition,
        ownerId: idOf(second ? secondInstructor : firstInstructor),
        visibility: isPrivate ? 'private' : 'shared',
        note: 'Demo library',
        slug: item.slug,
        publish: !isPrivate,
      });
      versionOf.set(item.slug, versionId);
    }

    const sections = await tx
      .insert(classes)
      .values([
        { name: 'AUT 141 Charging Systems, Section A', term: 'Fall 2026' },
        { name: 'AUT 141 Charging Systems, Evening', term: 'Fall 2026' },
      ])
      .returning({ id: classes.id });
    const [day, evening] = sections;
    if (!day || !evening) throw new Error('demo classes were not created');
    await tx.insert(classInstructors).values([
      { classId: day.id, userId: idOf(firstInstructor) },
      { classId: evening.id, userId: idOf(secondInstructor) },
    ]);
    await tx.insert(enrollments).values([
      ...students.slice(0, 5).map((email) => ({ classId: day.id, userId: idOf(email) })),
      ...students.slice(5).map((email) => ({ classId: evening.id, userId: idOf(email) })),
    ]);

    const version = (slug: string) => {
      const id = versionOf.get(slug);
      if (id === undefined) throw new Error(`demo assignment needs scenarios/${slug}.json`);
      return id;
    };
    const at = (days: number) => new Date(now.getTime() + days * DAY);
    await tx.insert(assignments).values([
      { classId: day.id, scenarioVersionId: version('field-open-orland-fen'), title: 'Week 1: no-charge complaint', opensAt: at(-2), dueAt: at(12), attemptsAllowed: 3, createdBy: idOf(firstInstructor) },
      { classId: day.id, scenarioVersionId: version('diode-open-tarrow-flats'), title: 'Week 2: dim lights and radio whine', opensAt: at(-1), dueAt: at(19), attemptsAllowed: 2, showCurveAfter: true, showFeedbackAfter: false, createdBy: idOf(firstInstructor) },
      { classId: day.id, scenarioVersionId: version('regulator-set-high-redcourt-alder'), title: 'Week 3: failing bulbs', opensAt: at(7), dueAt: at(26), attemptsAllowed: 3, createdBy: idOf(firstInstructor) },
      { classId: evening.id, scenarioVersionId: version('belt-slip-harlan-ridge'), title: 'Evening week 1: squeal at start-up', opensAt: at(-1), dueAt: at(13), attemptsAllowed: 3, createdBy: idOf(secondInstructor) },
    ]);
  });
}
