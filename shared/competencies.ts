/**
 * Competencies: each test of the charging-system diagnostic family is one
 * competency an instructor signs off, from a graded attempt that expected it.
 */
import { z } from 'zod';
import type { DiagnosticTest } from '../sim/faults.ts';
import { DIAGNOSTIC_TESTS } from './scenario.ts';

export const COMPETENCIES = DIAGNOSTIC_TESTS;
export type Competency = DiagnosticTest;

export const COMPETENCY_LABELS: Readonly<Record<Competency, string>> = {
  'battery-ocv': 'Battery state of charge (open-circuit voltage)',
  'battery-load': 'Battery load test',
  'regulated-voltage': 'Regulated (no-load) charging voltage',
  output: 'Output test under carbon-pile load',
  'voltage-drop-positive': 'Voltage drop, positive side',
  'voltage-drop-ground': 'Voltage drop, ground side',
  ripple: 'AC ripple (diode) check',
  'key-off-draw': 'Key-off draw',
  cranking: 'Cranking voltage',
};

export const competencySchema = z.enum(COMPETENCIES, { error: `competency must be one of: ${COMPETENCIES.join(', ')}` });
