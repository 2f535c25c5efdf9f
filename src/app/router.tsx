import { createBrowserRouter } from 'react-router-dom';
import { Spinner } from '../components/ui/states.tsx';
import { paths } from '../config/paths.ts';
import { AdminOutboxPage } from './routes/admin-outbox.tsx';
import { AdminUsersPage } from './routes/admin-users.tsx';
import { AppLayout, appLayoutLoader } from './routes/app-layout.tsx';
import { homeLoader } from './routes/home.tsx';
import { NotFoundPage, RouteErrorPage } from './routes/not-found.tsx';
import { ForgotPasswordPage, SetPasswordPage } from './routes/password.tsx';
import { roleLoader } from './routes/role-guard.tsx';
import { SignInPage, signInLoader } from './routes/sign-in.tsx';
import { instructorRoutes } from './routes/instructor-routes.tsx';
import { studentRoutes } from './routes/student-routes.tsx';
import { liveRoutes } from './routes/live-routes.tsx';

/** Shown while the first page's loaders run (who is signed in), before anything else can render. */
function FirstLoad() {
  return (
    <div className="flex min-h-screen items-center justify-center">
      <Spinner label="Opening Loadline" />
    </div>
  );
}

export const router = createBrowserRouter([
  { path: paths.signIn.pattern, loader: signInLoader, element: <SignInPage />, errorElement: <RouteErrorPage />, hydrateFallbackElement: <FirstLoad /> },
  { path: paths.forgotPassword.pattern, element: <ForgotPasswordPage /> },
  { path: paths.setPassword.pattern, element: <SetPasswordPage /> },
  {
    path: '/',
    loader: appLayoutLoader,
    element: <AppLayout />,
    errorElement: <RouteErrorPage />,
    hydrateFallbackElement: <FirstLoad />,
    children: [
      // The start page is only a redirect to the role's first page; it renders nothing of its own.
      { index: true, loader: homeLoader, element: null },
      { loader: roleLoader('student'), children: studentRoutes },
      { loader: roleLoader('instructor', 'admin'), children: instructorRoutes },
      ...liveRoutes,
      {
        loader: roleLoader('admin'),
        children: [
          { path: paths.adminUsers.pattern, element: <AdminUsersPage /> },
          { path: paths.adminOutbox.pattern, element: <AdminOutboxPage /> },
          { path: paths.adminPlatforms.pattern, lazy: () => import('./routes/admin-lti.tsx') },
        ],
      },
      { path: '*', element: <NotFoundPage /> },
    ],
  },
]);
