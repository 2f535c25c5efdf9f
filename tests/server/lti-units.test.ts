/** The pure parts of the learning-platform link: role mapping, service addresses, paging, back-off and the grade's comment. */
import { describe, expect, it } from 'vitest';
import { displayName } from '../../server/lti/accounts.ts';
import { startLocalPlatform } from '../../server/lti/local-platform.ts';
import { mappedRole } from '../../server/lti/claims.ts';
import { isOwnTarget } from '../../server/lti/login.ts';
import { nextLink } from '../../server/lti/roster-sync.ts';
import { backoffMs, MAX_BACKOFF_MS, scoreComment, scoresUrl } from '../../server/lti/scores.ts';

const LIS = 'http://purl.imsglobal.org/vocab/lis/v2/membership';

describe('the roles claim', () => {
  // LTI Core 1.3 §5.3.7 and Appendix A.2.3: context roles, full URIs or their simple names; sub-roles after a '#'.
  it('maps instructors and teaching assistants to instructor, learners to student, and nothing else', () => {
    expect(mappedRole([`${LIS}#Instructor`])).toBe('instructor');
    expect(mappedRole([`${LIS}/Instructor#TeachingAssistant`])).toBe('instructor');
    expect(mappedRole(['Instructor'])).toBe('instructor');
    expect(mappedRole(['TeachingAssistant'])).toBe('instructor');
    expect(mappedRole([`${LIS}#Learner`])).toBe('student');
    expect(mappedRole(['Learner'])).toBe('student');
    expect(mappedRole([`${LIS}/Learner#NonCreditLearner`])).toBe('student');
    // Teaching wins over learning when a person has both.
    expect(mappedRole([`${LIS}#Learner`, `${LIS}#Instructor`])).toBe('instructor');
    expect(mappedRole([`${LIS}#Mentor`, 'http://purl.imsglobal.org/vocab/lis/v2/institution/person#Administrator'])).toBeNull();
    expect(mappedRole([])).toBeNull();
    // A look-alike in another vocabulary is not a context role.
    expect(mappedRole(['http://example.org/roles#Instructor'])).toBeNull();
  });
});

describe('service addresses', () => {
  it('adds /scores to a line item address and keeps its query (AGS 2.0 §3.4)', () => {
    expect(scoresUrl('https://lms.example/api/lti/courses/7/line_items/42')).toBe('https://lms.example/api/lti/courses/7/line_items/42/scores');
    expect(scoresUrl('https://lms.example/lineitems/42/?type_id=9')).toBe('https://lms.example/lineitems/42/scores?type_id=9');
  });

  it('reads the next page from a Link header (NRPS 2.0, paging; section from memory)', () => {
    expect(nextLink('<https://lms.example/m?page=2>; rel="next", <https://lms.example/m?page=1>; rel="first"')).toBe('https://lms.example/m?page=2');
    expect(nextLink('<https://lms.example/m?page=1>; rel="first"')).toBeNull();
    expect(nextLink(null)).toBeNull();
  });

  it('takes only its own addresses as a login target', () => {
    expect(isOwnTarget('https://loadline.example/lti/launch', 'https://loadline.example')).toBe(true);
    expect(isOwnTarget('https://loadline.example/bench', 'https://loadline.example')).toBe(false);
    expect(isOwnTarget('https://elsewhere.example/lti/launch', 'https://loadline.example')).toBe(false);
    expect(isOwnTarget('not a url', 'https://loadline.example')).toBe(false);
  });
});

describe('sending grades', () => {
  it('backs off by doubling from the base, up to an hour', () => {
    expect([1, 2, 3, 4].map((n) => backoffMs(n, 30_000))).toEqual([30_000, 60_000, 120_000, 240_000]);
    expect(backoffMs(30, 30_000)).toBe(MAX_BACKOFF_MS);
  });

  it('says in the comment which fault the student named and whether it was the one', () => {
    const right = scoreComment({ verified: true, fault: { given: 'none', actual: ['none'], ok: true, labels: ['No fault: the charging system is healthy'] } });
    expect(right).toBe('Fault named: No fault: the charging system is healthy (correct).');
    const wrong = scoreComment({ verified: false, fault: { given: 'none', actual: ['diode-open'], ok: false, labels: ['An open diode'] } });
    expect(wrong).toMatch(/^Fault named: No fault: the charging system is healthy \(not the fault; it was: An open diode\)\. Some recorded readings/);
  });
});

describe('names', () => {
  it('uses the full name, else given and family names, else a placeholder, without control characters', () => {
    expect(displayName({ subject: 's1', name: '  Wren   Ashcombe ' })).toBe('Wren Ashcombe');
    expect(displayName({ subject: 's1', givenName: 'Milo', familyName: 'Ferrant' })).toBe('Milo Ferrant');
    expect(displayName({ subject: 's1', name: 'Ju\u0007no' })).toBe('Juno');
    expect(displayName({ subject: 's1' })).toMatch(/^Course member [0-9a-f]{6}$/);
  });
});

describe('the local platform', () => {
  it('refuses to start in production', async () => {
    const was = process.env.NODE_ENV;
    process.env.NODE_ENV = 'production';
    try {
      await expect(startLocalPlatform({ toolUrl: 'http://127.0.0.1:1' })).rejects.toThrow(/never runs in production/);
    } finally {
      process.env.NODE_ENV = was;
    }
  });
});
