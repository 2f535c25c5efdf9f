/** A launch or login refused: a page for the person, a log line for the admin. */
export class LaunchRefusal extends Error {
  constructor(
    readonly status: number,
    /** Short, for the page's heading. */
    readonly title: string,
    /** What was wrong, in words a student or instructor can pass on. */
    message: string,
    /** A short code for the log: bad-signature, wrong-aud, expired, replayed-nonce, … */
    readonly reason: string,
    readonly hint = 'Go back to your course and open Loadline again. If it happens again, show this page to your program admin.',
    /** What the log line carries besides the reason (never a token). */
    readonly detail: Record<string, unknown> = {},
  ) {
    super(message);
  }
}

export const refuse = (status: number, title: string, message: string, reason: string, detail: Record<string, unknown> = {}, hint?: string) =>
  new LaunchRefusal(status, title, message, reason, hint, detail);

/** The request field a refusal is about, for an answer in JSON. */
export function fieldOf(err: LaunchRefusal): string {
  if (typeof err.detail.field === 'string' && err.detail.field) return err.detail.field;
  switch (err.reason) {
    case 'handoff-spent':
      return 'token';
    case 'unknown-state':
    case 'state-expired':
    case 'replayed-nonce':
      return 'state';
    case 'unknown-issuer':
    case 'ambiguous-issuer':
      return 'iss';
    case 'foreign-target':
      return 'target_link_uri';
    default:
      return 'id_token';
  }
}
