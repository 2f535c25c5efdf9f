/**
 * The few pages the launch itself shows, outside the client app: a refused
 * launch (what went wrong and what to do), and the way into Loadline when a
 * frame keeps its sign-in cookie out. No script and no inline style (the
 * content security policy allows neither); the look comes from /lti/page.css.
 */

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)} · Loadline</title>
<link rel="stylesheet" href="/lti/page.css">
</head>
<body>
<main>
<p class="brand">Loadline</p>
${body}
</main>
</body>
</html>
`;
}

/** Why a launch or login was refused, in words for the person in front of it, and what to try. */
export function refusalPage(title: string, message: string, hint: string): string {
  return page(
    title,
    `<h1>${escapeHtml(title)}</h1>
<p class="message" data-testid="lti-refusal">${escapeHtml(message)}</p>
<p class="hint">${escapeHtml(hint)}</p>`,
  );
}

/** Shown in a frame whose browser kept Loadline's cookie out: the same launch, opened in a window of its own. */
export function openInWindowPage(href: string): string {
  return page(
    'Open Loadline in a new window',
    `<h1>Open Loadline in a new window</h1>
<p class="message">Your browser does not let Loadline keep you signed in inside the course page.</p>
<p><a class="button" href="${escapeHtml(href)}" target="_blank" rel="noopener">Open Loadline in a new window</a></p>
<p class="hint">The link works once, for the next two minutes; launch again from the course if it has run out.</p>`,
  );
}

export const PAGE_CSS = `
:root { color-scheme: light; font-family: system-ui, -apple-system, "Segoe UI", sans-serif; }
body { margin: 0; background: #f1f5f9; color: #0f172a; }
main { max-width: 36rem; margin: 3rem auto; padding: 2rem; background: #fff; border-radius: 0.75rem; box-shadow: 0 1px 3px rgb(15 23 42 / 0.12); }
.brand { margin: 0 0 1.5rem; font-weight: 600; letter-spacing: 0.02em; color: #475569; }
h1 { margin: 0 0 0.75rem; font-size: 1.35rem; }
.message { margin: 0 0 0.75rem; line-height: 1.5; }
.hint { margin: 0; color: #475569; font-size: 0.9rem; line-height: 1.5; }
.button { display: inline-block; margin: 0.5rem 0 1rem; padding: 0.6rem 1rem; border-radius: 0.4rem; background: #0f172a; color: #fff; text-decoration: none; font-weight: 500; }
.button:hover, .button:focus { background: #334155; }
`;
