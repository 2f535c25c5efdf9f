import { NavLink, Outlet, useMatches, useNavigate, useNavigation, type LoaderFunctionArgs } from 'react-router-dom';
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

/** A route whose page is a full-width workspace (the bench) says so in its handle. */
const isWorkspace = (handle: unknown) => typeof handle === 'object' && handle !== null && (handle as { workspace?: unknown }).workspace === true;

export function AppLayout() {
  const { data } = useMe();
  const signOut = useSignOut();
  const navigate = useNavigate();
  const navigation = useNavigation();
  const workspace = useMatches().some((m) => isWorkspace(m.handle));
  const user = data?.user;
  if (!user) return null;
  return (
    <div className="min-h-screen">
      <a href="#main" className="sr-only-focusable fixed left-2 top-2 z-50 rounded bg-white px-3 py-2 text-sm shadow">
        Skip to content
      </a>
      <header className="border-b border-slate-800 bg-slate-900 text-slate-100">
        <div className={`mx-auto flex min-h-14 flex-wrap items-center gap-x-4 gap-y-1 px-3 py-1.5 sm:px-4 lg:h-14 lg:flex-nowrap lg:py-0 ${workspace ? '' : 'max-w-7xl'}`}>
          <NavLink to={paths.home.href()} className="flex items-center gap-2 font-semibold tracking-tight text-white">
            <Logo />
            <span>Loadline</span>
          </NavLink>
          <div className="ml-auto flex items-center gap-3 text-sm lg:order-last">
            <span className="hidden items-center text-slate-300 md:flex">
              <span className="max-w-48 truncate">{user.name}</span>
              <span className="ml-1.5 rounded bg-slate-700 px-1.5 py-0.5 text-xs text-slate-200">{roleLabel[user.role]}</span>
            </span>
            <button
              type="button"
              className="min-h-8 whitespace-nowrap rounded-md px-2.5 py-1 text-slate-200 ring-1 ring-slate-600 hover:bg-slate-800 hover:text-white"
              onClick={() => signOut.mutate(undefined, { onSuccess: () => void navigate(paths.signIn.href()) })}
            >
              Sign out
            </button>
          </div>
          <nav aria-label="Main" className="-mx-1 flex w-full min-w-0 items-center gap-1 overflow-x-auto lg:mx-0 lg:w-auto">
            {NAV[user.role].map((item) => (
              <NavLink
                key={item.to}
                to={item.to}
                className={({ isActive }) =>
                  `whitespace-nowrap rounded-md px-3 py-1.5 text-sm font-medium ${isActive ? 'bg-slate-700 text-white' : 'text-slate-300 hover:bg-slate-800 hover:text-white'}`
                }
              >
                {item.label}
              </NavLink>
            ))}
          </nav>
        </div>
        {navigation.state === 'loading' && <div className="h-0.5 animate-pulse bg-live-300" aria-hidden="true" />}
      </header>
      <main id="main" className={workspace ? '' : 'mx-auto max-w-7xl px-4 py-6 sm:py-8'}>
        <Outlet />
      </main>
    </div>
  );
}
