/** The demo school and its people: all invented. */
import type { Role } from '../../shared/api/auth.ts';

export const DEMO_SCHOOL = 'Cinder Valley Technical Institute';
export const DEMO_PASSWORD = 'bench-demo-2026';

export interface DemoPerson {
  email: string;
  name: string;
  role: Role;
}

const domain = 'cindervalley.example';

export const DEMO_PEOPLE: DemoPerson[] = [
  { email: `admin@${domain}`, name: 'Marisol Quennell', role: 'admin' },
  { email: `r.okafor-lind@${domain}`, name: 'Rune Okafor-Lind', role: 'instructor' },
  { email: `t.vasquez-hale@${domain}`, name: 'Tamsin Vasquez-Hale', role: 'instructor' },
  { email: `ada.brightwater@${domain}`, name: 'Ada Brightwater', role: 'student' },
  { email: `bo.castellane@${domain}`, name: 'Bo Castellane', role: 'student' },
  { email: `cyrus.imbert@${domain}`, name: 'Cyrus Imbert', role: 'student' },
  { email: `dalia.fenwright@${domain}`, name: 'Dalia Fenwright', role: 'student' },
  { email: `eino.marrow@${domain}`, name: 'Eino Marrow', role: 'student' },
  { email: `faye.tolliver@${domain}`, name: 'Faye Tolliver', role: 'student' },
  { email: `gus.harrowgate@${domain}`, name: 'Gus Harrowgate', role: 'student' },
  { email: `hana.drummelow@${domain}`, name: 'Hana Drummelow', role: 'student' },
];

export const demoFirst = (role: Role): DemoPerson => {
  const p = DEMO_PEOPLE.find((x) => x.role === role);
  if (!p) throw new Error(`no demo ${role}`);
  return p;
};
