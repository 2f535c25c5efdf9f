/**
 * Competencies: each test of the charging-system diagnostic family is one
 * competency an instructor signs off, from a graded attempt that expected it.
 */
import { z } from 'zod';
import type { DiagnosticTest } from '../sim/faults.ts';
import { DIAGNOSTIC_TESTS, DIAGNOSTIC_TEST_LABELS } from './scenario.ts';

export const COMPETENCIES = DIAGNOSTIC_TESTS;
export type Competency = DiagnosticTest;

/** A competency is named as its test is. */
export const COMPETENCY_LABELS: Readonly<Record<Competency, string>> = DIAGNOSTIC_TEST_LABELS;

export const competencySchema = z.enum(COMPETENCIES, { error: `competency must be one of: ${COMPETENCIES.join(', ')}` });
