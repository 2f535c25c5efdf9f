import { createBrowserRouter } from 'react-router-dom';
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

export const router = createBrowserRouter([
  { path: paths.signIn.pattern, loader: signInLoader, element: <SignInPage />, errorElement: <RouteErrorPage /> },
  { path: paths.forgotPassword.pattern, element: <ForgotPasswordPage /> },
  { path: paths.setPassword.pattern, element: <SetPasswordPage /> },
  {
    path: '/',
    loader: appLayoutLoader,
    element: <AppLayout />,
    errorElement: <RouteErrorPage />,
    children: [
      { index: true, loader: homeLoader },
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
