import { Link, isRouteErrorResponse, useRouteError } from 'react-router-dom';
import { paths } from '../../config/paths.ts';

export function NotFoundPage() {
  return (
    <div className="mx-auto max-w-lg py-24 text-center">
      <p className="font-mono text-sm text-slate-600">404</p>
      <h1 className="mt-2 text-2xl font-semibold">There is nothing at this address</h1>
      <p className="mt-2 text-slate-600">The page may have moved, or the link may be mistyped.</p>
      <Link to={paths.home.href()} className="mt-6 inline-block rounded-md bg-slate-900 px-4 py-2 text-sm font-medium text-white">
        Go to your start page
      </Link>
    </div>
  );
}

export function RouteErrorPage() {
  const error = useRouteError();
  if (isRouteErrorResponse(error) && error.status === 404) return <NotFoundPage />;
  const message = error instanceof Error ? error.message : 'An unexpected error occurred';
  return (
    <div className="mx-auto max-w-lg py-24 text-center" role="alert">
      <h1 className="text-2xl font-semibold">This page failed to load</h1>
      <p className="mt-2 text-slate-600">{message}</p>
      <button type="button" onClick={() => window.location.reload()} className="mt-6 rounded-md bg-slate-900 px-4 py-2 text-sm font-medium text-white">
        Reload
      </button>
    </div>
  );
}
