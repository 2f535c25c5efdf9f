/**
 * The two input rules every route shares: ids written one way only, within
 * PostgreSQL's integer, and one name rule for every name a person types.
 * (PostgreSQL's integer is 4 bytes, -2147483648 to +2147483647: PostgreSQL
 * documentation, "Numeric Types". Bidirectional controls: Unicode UAX #9 and
 * CVE-2021-42574; CSV injection: OWASP; from memory.)
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { idField, idParam, MAX_ID } from '../../shared/api/ids.ts';
import { nameProblem, nameText } from '../../shared/names.ts';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';

describe('ids in paths and queries', () => {
  const id = idParam('id');

  it('takes exactly the plain decimal digits of 1 to 2147483647', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: MAX_ID }), (n) => {
        expect(id.parse(String(n))).toBe(n);
      }),
    );
    expect(MAX_ID).toBe(2 ** 31 - 1);
  });

  it('refuses any other spelling, so no two addresses name one thing', () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 14 }), (s) => {
        const r = id.safeParse(s);
        // Accepted only when it is its own canonical spelling.
        if (r.success) expect(String(r.data)).toBe(s);
      }),
    );
    for (const s of ['0', '-1', '01', '1e1', '0x10', '0b1', '0o7', ' 1', '1 ', '+1', '1.0', '1_000', '2147483648', '9'.repeat(30), '', '١']) {
      expect(id.safeParse(s).success, JSON.stringify(s)).toBe(false);
    }
  });

  it('names the parameter in its message', () => {
    const r = idParam('versionId').safeParse('0x1');
    expect(r.success).toBe(false);
    expect(r.error!.issues[0]!.message).toMatch(/^versionId must be a positive whole number/);
    expect(idField('attemptId').safeParse(2 ** 31).error!.issues[0]!.message).toBe(`attemptId must be at most ${MAX_ID}`);
  });
});

describe('the name rule', () => {
  it('accepts the names of people, classes and titles as the demo school writes them', () => {
    for (const name of [...DEMO_PEOPLE.map((p) => p.name), 'Søren Ødegård', 'Zoë O’Brien-Nakamura', 'محمد العلي', 'יעל כהן', '李小龍', 'Charging systems, evening section', 'Week 3: failing bulbs (2 attempts)']) {
      expect(nameProblem(name), name).toBeNull();
    }
  });

  it('refuses control characters anywhere, direction controls anywhere, and a formula at the start', () => {
    for (const bad of ['Ada\nB', 'Ada\rB', 'Ada\tB', 'Ada\u0000', 'Ada\u0085B', 'Ada\u2028B', 'Ada\u202eB', '\u2066Ada\u2069', '=1+1', '+1', '-1', '@SUM(A1)']) {
      expect(nameProblem(bad), JSON.stringify(bad)).not.toBeNull();
    }
    // A formula character later in a name is only text.
    expect(nameProblem('Ada Brightwater-Lind')).toBeNull();
    expect(nameProblem('Jo @ the bench')).toBeNull();
  });

  it('trims first, so a formula behind spaces is still refused, and labels its messages', () => {
    const schema = nameText('Name', 1, 120);
    expect(schema.safeParse('  =1+1').error!.issues[0]!.message).toBe('Name must not start with = + - or @, which a spreadsheet would run as a formula');
    expect(schema.parse('  Ada Brightwater ')).toBe('Ada Brightwater');
  });
});
