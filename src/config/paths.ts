/** Every client URL, as a pattern for the router and a builder for links. */
export const paths = {
  signIn: { pattern: '/sign-in', href: (next?: string) => (next ? `/sign-in?next=${encodeURIComponent(next)}` : '/sign-in') },
  forgotPassword: { pattern: '/forgot-password', href: () => '/forgot-password' },
  setPassword: { pattern: '/set-password', href: () => '/set-password' },
  home: { pattern: '/', href: () => '/' },
  bench: { pattern: '/bench', href: () => '/bench' },
  benchNew: {
    pattern: '/bench/new',
    href: (start: { assignmentId: number } | { scenarioId: number }) =>
      'assignmentId' in start ? `/bench/new?assignmentId=${start.assignmentId}` : `/bench/new?scenarioId=${start.scenarioId}`,
  },
  benchAttempt: { pattern: '/bench/:attemptId', href: (attemptId: number) => `/bench/${attemptId}` },
  attempts: { pattern: '/attempts', href: () => '/attempts' },
  replay: { pattern: '/attempts/:attemptId/replay', href: (attemptId: number) => `/attempts/${attemptId}/replay` },
  progress: { pattern: '/progress', href: () => '/progress' },
  studentProgress: { pattern: '/students/:userId/progress', href: (userId: number) => `/students/${userId}/progress` },
  scenarios: { pattern: '/scenarios', href: () => '/scenarios' },
  scenarioNew: { pattern: '/scenarios/new', href: () => '/scenarios/new' },
  scenario: { pattern: '/scenarios/:scenarioId', href: (scenarioId: number) => `/scenarios/${scenarioId}` },
  scenarioTry: { pattern: '/scenarios/:scenarioId/try', href: (scenarioId: number) => `/scenarios/${scenarioId}/try` },
  classes: { pattern: '/classes', href: () => '/classes' },
  class: { pattern: '/classes/:classId', href: (classId: number) => `/classes/${classId}` },
  live: { pattern: '/classes/:classId/live', href: (classId: number) => `/classes/${classId}/live` },
  compare: { pattern: '/assignments/:assignmentId/compare', href: (assignmentId: number) => `/assignments/${assignmentId}/compare` },
  adminUsers: { pattern: '/admin/users', href: () => '/admin/users' },
  adminOutbox: { pattern: '/admin/outbox', href: () => '/admin/outbox' },
} as const;
