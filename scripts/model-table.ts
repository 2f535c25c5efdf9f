/**
 * `npm run docs:table`: rewrites the fault x test table in docs/model.md
 * from the model (server/grading/diagnosis-table.ts), between its two markers. A
 * unit test fails when the docs and the model disagree.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { diagnosisTable, diagnosisTableMarkdown } from '../server/grading/diagnosis-table.ts';

const file = new URL('../docs/model.md', import.meta.url);
const doc = readFileSync(file, 'utf8');
const begin = '<!-- fault-test-table -->';
const end = '<!-- /fault-test-table -->';
const a = doc.indexOf(begin);
const b = doc.indexOf(end);
if (a < 0 || b < a) throw new Error('docs/model.md has no fault-test-table markers');
writeFileSync(file, `${doc.slice(0, a + begin.length)}\n${diagnosisTableMarkdown(diagnosisTable())}\n${doc.slice(b)}`);
console.log('docs/model.md: fault x test table rewritten');
