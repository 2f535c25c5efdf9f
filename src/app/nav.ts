import type { Role } from '../../shared/api/auth.ts';
import { paths } from '../config/paths.ts';

export interface NavItem {
  label: string;
  to: string;
}

/** What each role sees in the top navigation. */
export const NAV: Record<Role, NavItem[]> = {
  student: [
    { label: 'Bench', to: paths.bench.href() },
    { label: 'My attempts', to: paths.attempts.href() },
    { label: 'Progress', to: paths.progress.href() },
  ],
  instructor: [
    { label: 'Scenarios', to: paths.scenarios.href() },
    { label: 'Classes', to: paths.classes.href() },
  ],
  // Admins run the accounts first, and may look after any class or scenario as an instructor does.
  admin: [
    { label: 'Users', to: paths.adminUsers.href() },
    { label: 'Classes', to: paths.classes.href() },
    { label: 'Scenarios', to: paths.scenarios.href() },
    { label: 'Platforms', to: paths.adminPlatforms.href() },
    { label: 'Outbox', to: paths.adminOutbox.href() },
  ],
};

export const homeFor = (role: Role): string => NAV[role][0]?.to ?? paths.home.href();
