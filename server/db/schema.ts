/**
 * The database, as Drizzle tables. Migrations in server/db/migrations are
 * generated from this file by drizzle-kit and applied at start.
 */
import { sql } from 'drizzle-orm';
import {
  bigserial,
  boolean,
  index,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  real,
  serial,
  text,
  timestamp,
  uniqueIndex,
  varchar,
  json,
} from 'drizzle-orm/pg-core';

export const roleEnum = pgEnum('role', ['admin', 'instructor', 'student']);

const timestamps = {
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
};

export const users = pgTable(
  'users',
  {
    id: serial('id').primaryKey(),
    email: varchar('email', { length: 254 }).notNull(),
    name: varchar('name', { length: 120 }).notNull(),
    role: roleEnum('role').notNull(),
    /** Null until an invited user sets a password. */
    passwordHash: text('password_hash'),
    disabled: boolean('disabled').notNull().default(false),
    ...timestamps,
  },
  (t) => [uniqueIndex('users_email_unique').on(sql`lower(${t.email})`)],
);

/** The table connect-pg-simple reads and writes; created here, never at run time. */
export const sessions = pgTable(
  'session',
  {
    sid: varchar('sid').primaryKey(),
    sess: json('sess').notNull(),
    expire: timestamp('expire', { precision: 6 }).notNull(),
  },
  (t) => [index('IDX_session_expire').on(t.expire)],
);

/** Single-use tokens for invitations and password resets; only a hash is stored. */
export const passwordTokens = pgTable('password_tokens', {
  id: serial('id').primaryKey(),
  userId: integer('user_id')
    .notNull()
    .references(() => users.id, { onDelete: 'cascade' }),
  purpose: varchar('purpose', { length: 16 }).notNull(),
  tokenHash: varchar('token_hash', { length: 128 }).notNull().unique(),
  expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
  usedAt: timestamp('used_at', { withTimezone: true }),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

/** Mail the product sends, as handed to the SMTP server (kept for the admin's outbox page). */
export const outbox = pgTable('outbox', {
  id: serial('id').primaryKey(),
  toAddress: varchar('to_address', { length: 254 }).notNull(),
  subject: varchar('subject', { length: 300 }).notNull(),
  body: text('body').notNull(),
  status: varchar('status', { length: 16 }).notNull().default('queued'),
  error: text('error'),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  sentAt: timestamp('sent_at', { withTimezone: true }),
});

export const settings = pgTable('settings', {
  key: varchar('key', { length: 64 }).primaryKey(),
  value: jsonb('value').notNull(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
});

export const classes = pgTable('classes', {
  id: serial('id').primaryKey(),
  name: varchar('name', { length: 120 }).notNull(),
  term: varchar('term', { length: 60 }).notNull().default(''),
  archived: boolean('archived').notNull().default(false),
  ...timestamps,
});

export const classInstructors = pgTable(
  'class_instructors',
  {
    classId: integer('class_id')
      .notNull()
      .references(() => classes.id, { onDelete: 'cascade' }),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
  },
  (t) => [primaryKey({ columns: [t.classId, t.userId] })],
);

export const enrollments = pgTable(
  'enrollments',
  {
    classId: integer('class_id')
      .notNull()
      .references(() => classes.id, { onDelete: 'cascade' }),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.classId, t.userId] }), index('enrollments_user').on(t.userId)],
);

export const scenarios = pgTable('scenarios', {
  id: serial('id').primaryKey(),
  slug: varchar('slug', { length: 80 }).notNull().unique(),
  ownerId: integer('owner_id').references(() => users.id, { onDelete: 'set null' }),
  /** Private scenarios are seen and edited by their owner only; shared ones are seen by every instructor. */
  visibility: varchar('visibility', { length: 16 }).notNull().default('shared'),
  /** The version students get for practice and new assignments. */
  publishedVersionId: integer('published_version_id'),
  latestVersion: integer('latest_version').notNull().default(0),
  archived: boolean('archived').notNull().default(false),
  ...timestamps,
});

/** Immutable: an edit makes a new row. */
export const scenarioVersions = pgTable(
  'scenario_versions',
  {
    id: serial('id').primaryKey(),
    scenarioId: integer('scenario_id')
      .notNull()
      .references(() => scenarios.id, { onDelete: 'cascade' }),
    version: integer('version').notNull(),
    title: varchar('title', { length: 160 }).notNull(),
    /** The whole scenario document, valid against the shared scenario schema. */
    definition: jsonb('definition').notNull(),
    note: text('note').notNull().default(''),
    createdBy: integer('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('scenario_versions_unique').on(t.scenarioId, t.version)],
);

export const assignments = pgTable(
  'assignments',
  {
    id: serial('id').primaryKey(),
    classId: integer('class_id')
      .notNull()
      .references(() => classes.id, { onDelete: 'cascade' }),
    scenarioVersionId: integer('scenario_version_id')
      .notNull()
      .references(() => scenarioVersions.id, { onDelete: 'restrict' }),
    title: varchar('title', { length: 160 }).notNull(),
    opensAt: timestamp('opens_at', { withTimezone: true }).notNull(),
    dueAt: timestamp('due_at', { withTimezone: true }).notNull(),
    attemptsAllowed: integer('attempts_allowed').notNull().default(3),
    showCurveAfter: boolean('show_curve_after').notNull().default(true),
    showFeedbackAfter: boolean('show_feedback_after').notNull().default(true),
    /** Students of the class may practise the assignment's scenario versions while it is open or upcoming. */
    allowPractice: boolean('allow_practice').notNull().default(false),
    /** Seed of the per-student draw from the assignment's pool (assignment_pool). */
    poolSeed: integer('pool_seed').notNull().default(0),
    createdBy: integer('created_by').references(() => users.id, { onDelete: 'set null' }),
    ...timestamps,
  },
  (t) => [index('assignments_class').on(t.classId)],
);

/** One student's own terms on an assignment: a later due date, more attempts, or both. */
export const assignmentExtensions = pgTable(
  'assignment_extensions',
  {
    assignmentId: integer('assignment_id')
      .notNull()
      .references(() => assignments.id, { onDelete: 'cascade' }),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    /** Replaces the assignment's due date for this student (null: the assignment's). */
    dueAt: timestamp('due_at', { withTimezone: true }),
    /** Attempts on top of the assignment's. */
    extraAttempts: integer('extra_attempts').notNull().default(0),
    createdBy: integer('created_by').references(() => users.id, { onDelete: 'set null' }),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.assignmentId, t.userId] })],
);

/**
 * The scenario versions an assignment draws each student's car from (one
 * vehicle, several fault sets). An assignment without rows here gives every
 * student its own scenario version.
 */
export const assignmentPool = pgTable(
  'assignment_pool',
  {
    assignmentId: integer('assignment_id')
      .notNull()
      .references(() => assignments.id, { onDelete: 'cascade' }),
    scenarioVersionId: integer('scenario_version_id')
      .notNull()
      .references(() => scenarioVersions.id, { onDelete: 'restrict' }),
    position: integer('position').notNull(),
  },
  (t) => [primaryKey({ columns: [t.assignmentId, t.scenarioVersionId] })],
);

export const attempts = pgTable(
  'attempts',
  {
    id: serial('id').primaryKey(),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    scenarioVersionId: integer('scenario_version_id')
      .notNull()
      .references(() => scenarioVersions.id, { onDelete: 'restrict' }),
    assignmentId: integer('assignment_id').references(() => assignments.id, { onDelete: 'set null' }),
    mode: varchar('mode', { length: 16 }).notNull(),
    seed: integer('seed').notNull(),
    status: varchar('status', { length: 16 }).notNull().default('running'),
    /** Highest event sequence number stored so far. */
    lastSeq: integer('last_seq').notNull().default(0),
    /** Sim time of the latest stored event, for the live board. */
    simTimeMs: integer('sim_time_ms').notNull().default(0),
    /** The bench's own sim time as it last reported it while open, and when: the live board shows the meters at that moment. */
    benchTimeMs: integer('bench_time_ms'),
    benchSeenAt: timestamp('bench_seen_at', { withTimezone: true }),
    currentTest: varchar('current_test', { length: 40 }),
    readings: jsonb('readings'),
    diagnosis: jsonb('diagnosis'),
    result: jsonb('result'),
    grade: real('grade'),
    verified: boolean('verified').notNull().default(false),
    timeToDiagnosisMs: integer('time_to_diagnosis_ms'),
    startedAt: timestamp('started_at', { withTimezone: true }).notNull().defaultNow(),
    submittedAt: timestamp('submitted_at', { withTimezone: true }),
  },
  (t) => [index('attempts_user').on(t.userId), index('attempts_assignment').on(t.assignmentId)],
);

export const attemptEvents = pgTable(
  'attempt_events',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    attemptId: integer('attempt_id')
      .notNull()
      .references(() => attempts.id, { onDelete: 'cascade' }),
    seq: integer('seq').notNull(),
    simTimeMs: integer('sim_time_ms').notNull(),
    kind: varchar('kind', { length: 32 }).notNull(),
    payload: jsonb('payload').notNull(),
    /** Who caused it: the student at the bench, or an instructor's live injection. */
    source: varchar('source', { length: 16 }).notNull().default('bench'),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('attempt_events_seq').on(t.attemptId, t.seq)],
);

/**
 * Faults an instructor has sent to a running attempt. The server is the
 * authority on when each reached the bench (delivered_at, and the sim time
 * of the attempt's log then); the bench's log of it sets applied_at.
 */
export const pendingInjections = pgTable('pending_injections', {
  id: serial('id').primaryKey(),
  attemptId: integer('attempt_id')
    .notNull()
    .references(() => attempts.id, { onDelete: 'cascade' }),
  action: jsonb('action').notNull(),
  createdBy: integer('created_by').references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  appliedAt: timestamp('applied_at', { withTimezone: true }),
  /** When the server first sent it down the bench's stream. */
  deliveredAt: timestamp('delivered_at', { withTimezone: true }),
  /** The sim time of the attempt's log at that moment (the latest stored event's). */
  deliveredSimMs: integer('delivered_sim_ms'),
});

export const comments = pgTable(
  'comments',
  {
    id: serial('id').primaryKey(),
    attemptId: integer('attempt_id')
      .notNull()
      .references(() => attempts.id, { onDelete: 'cascade' }),
    authorId: integer('author_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    simTimeMs: integer('sim_time_ms').notNull(),
    body: text('body').notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('comments_attempt').on(t.attemptId)],
);

export const signOffs = pgTable(
  'sign_offs',
  {
    id: serial('id').primaryKey(),
    userId: integer('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    competency: varchar('competency', { length: 40 }).notNull(),
    attemptId: integer('attempt_id').references(() => attempts.id, { onDelete: 'set null' }),
    signedBy: integer('signed_by').references(() => users.id, { onDelete: 'set null' }),
    note: text('note').notNull().default(''),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('sign_offs_unique').on(t.userId, t.competency)],
);

export const rosterImports = pgTable('roster_imports', {
  id: serial('id').primaryKey(),
  classId: integer('class_id')
    .notNull()
    .references(() => classes.id, { onDelete: 'cascade' }),
  importedBy: integer('imported_by').references(() => users.id, { onDelete: 'set null' }),
  fileName: varchar('file_name', { length: 200 }).notNull(),
  rowCount: integer('row_count').notNull(),
  createdCount: integer('created_count').notNull(),
  enrolledCount: integer('enrolled_count').notNull(),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

/** Hit counters of the rate limits, shared by every server process. */
export const rateLimits = pgTable('rate_limits', {
  key: varchar('key', { length: 200 }).primaryKey(),
  hits: integer('hits').notNull(),
  resetAt: timestamp('reset_at', { withTimezone: true }).notNull(),
});
