/**
 * One rule for every name a person types that the product shows again or
 * exports: people's names (user creation and edits, single enrolment, roster
 * import), class names, scenario and assignment titles, and stored file
 * names. Refused: control characters (line breaks and tabs included, and the
 * Unicode line and paragraph separators), the characters that embed, override
 * or isolate the direction of text (a name could otherwise show reversed, or
 * hide what follows it), and a leading = + - or @, which a spreadsheet opening
 * an export would run as a formula (CSV injection).
 */
import { z } from 'zod';

// eslint-disable-next-line no-control-regex -- control characters are what this finds
const CONTROL = /[\u0000-\u001f\u007f-\u009f\u2028\u2029]/;
const BIDI_CONTROL = /[\u202a-\u202e\u2066-\u2069]/;
const FORMULA_START = /^[=+\-@]/;

/** What is wrong with a name (already trimmed), in words after its label, or null when it is fine. */
export function nameProblem(value: string): string | null {
  if (CONTROL.test(value)) return 'must not hold control characters such as line breaks or tabs';
  if (BIDI_CONTROL.test(value)) return 'must not hold characters that change the direction of text';
  if (FORMULA_START.test(value)) return 'must not start with = + - or @, which a spreadsheet would run as a formula';
  return null;
}

/** A trimmed name of `min` to `max` characters that passes `nameProblem`; messages start with `label`. */
export function nameText(label: string, min: number, max: number) {
  return z
    .string({ error: (iss) => (iss.input === undefined ? `${label} is required` : `${label} must be text`) })
    .trim()
    .min(min, min === 1 ? `${label} is required` : `${label} must be at least ${min} characters`)
    .max(max, `${label} must be at most ${max} characters`)
    .superRefine((value, ctx) => {
      const problem = nameProblem(value);
      if (problem) ctx.addIssue({ code: 'custom', message: `${label} ${problem}` });
    });
}
