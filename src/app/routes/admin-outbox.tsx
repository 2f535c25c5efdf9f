import { EmptyState, ErrorState, PageHeader, Spinner } from '../../components/ui/states.tsx';
import { useOutbox } from '../../features/users/api/get-outbox.ts';

export function AdminOutboxPage() {
  const outbox = useOutbox();
  return (
    <>
      <PageHeader title="Outbox" description="Mail caught by the local mail server: invitations and password resets. In production, mail goes to your SMTP server instead." />
      {outbox.isPending ? (
        <Spinner label="Loading mail" />
      ) : outbox.isError ? (
        <ErrorState error={outbox.error} retry={() => void outbox.refetch()} />
      ) : outbox.data.length === 0 ? (
        <EmptyState title="No mail yet">Invitations and resets will show here.</EmptyState>
      ) : (
        <ul className="space-y-3">
          {outbox.data.map((m) => (
            <li key={m.id} className="rounded-lg bg-white p-4 shadow-sm ring-1 ring-slate-200">
              <div className="flex flex-wrap justify-between gap-2 text-sm">
                <span className="font-medium">{m.subject}</span>
                <span className="text-slate-500">
                  to {m.to} · {new Date(m.createdAt).toLocaleString()}
                </span>
              </div>
              <pre className="mt-2 whitespace-pre-wrap break-words font-sans text-sm text-slate-700">{m.body}</pre>
            </li>
          ))}
        </ul>
      )}
    </>
  );
}
