import { NavLink, Outlet, useNavigate, useNavigation, type LoaderFunctionArgs } from 'react-router-dom';
import { Logo } from '../../components/ui/logo.tsx';
import { useMe } from '../../features/auth/api/get-me.ts';
import { useSignOut } from '../../features/auth/api/sign-out.ts';
import { paths } from '../../config/paths.ts';
import { NAV } from '../nav.ts';
import { requireSignedIn } from './role-guard.tsx';

export async function appLayoutLoader({ request }: LoaderFunctionArgs) {
  await requireSignedIn(request);
  return null;
}

const roleLabel = { admin: 'Admin', instructor: 'Instructor', student: 'Student' } as const;

export function AppLayout() {
  const { data } = useMe();
  const signOut = useSignOut();
  const navigate = useNavigate();
  const navigation = useNavigation();
  const user = data?.user;
  if (!user) return null;
  return (
    <div className="min-h-screen">
      <a href="#main" className="sr-only-focusable fixed left-2 top-2 z-50 rounded bg-white px-3 py-2 text-sm shadow">
        Skip to content
      </a>
      <header className="border-b border-slate-800 bg-slate-900 text-slate-100">
        <div className="mx-auto flex h-14 max-w-7xl items-center gap-6 px-4">
          <NavLink to={paths.home.href()} className="flex items-center gap-2 font-semibold tracking-tight text-white">
            <Logo />
            <span>Loadline</span>
          </NavLink>
          <nav aria-label="Main" className="flex items-center gap-1">
            {NAV[user.role].map((item) => (
              <NavLink
                key={item.to}
                to={item.to}
                className={({ isActive }) =>
                  `rounded-md px-3 py-1.5 text-sm font-medium ${isActive ? 'bg-slate-700 text-white' : 'text-slate-300 hover:bg-slate-800 hover:text-white'}`
                }
              >
                {item.label}
              </NavLink>
            ))}
          </nav>
          <div className="ml-auto flex items-center gap-3 text-sm">
            <span className="hidden text-slate-300 sm:inline">
              {user.name} <span className="ml-1 rounded bg-slate-700 px-1.5 py-0.5 text-xs text-slate-200">{roleLabel[user.role]}</span>
            </span>
            <button
              type="button"
              className="rounded-md px-2.5 py-1.5 text-slate-300 ring-1 ring-slate-600 hover:bg-slate-800 hover:text-white"
              onClick={() => signOut.mutate(undefined, { onSuccess: () => void navigate(paths.signIn.href()) })}
            >
              Sign out
            </button>
          </div>
        </div>
        {navigation.state === 'loading' && <div className="h-0.5 animate-pulse bg-live-300" aria-hidden="true" />}
      </header>
      <main id="main" className="mx-auto max-w-7xl px-4 py-8">
        <Outlet />
      </main>
    </div>
  );
}
