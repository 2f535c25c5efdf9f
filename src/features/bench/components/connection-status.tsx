/** "All saved" or how many events wait for the network. */
import type { Outbox, OutboxView } from '../api/event-outbox.ts';
import { useOutboxView } from '../hooks/use-bench-session.ts';

export function connectionText(v: OutboxView): string {
  if (v.status === 'saved') return 'All saved';
  if (v.status === 'offline') return `Offline — ${v.pending} event${v.pending === 1 ? '' : 's'} waiting`;
  if (v.status === 'sending') return 'Saving…';
  return `${v.pending} event${v.pending === 1 ? '' : 's'} to save`;
}

export function ConnectionStatus({ view }: { view: OutboxView }) {
  const tone = view.status === 'offline' ? 'bg-warn-100 text-warn-700 ring-warn-500/40' : 'bg-white text-slate-600 ring-slate-200';
  const dot = view.status === 'offline' ? 'bg-warn-500' : view.status === 'saved' ? 'bg-live-500' : 'bg-slate-400';
  return (
    <p role="status" data-testid="connection-status" className={`inline-flex items-center gap-2 rounded-full px-3 py-1 text-xs font-medium ring-1 ${tone}`}>
      <span className={`h-2 w-2 rounded-full ${dot}`} aria-hidden="true" />
      {connectionText(view)}
    </p>
  );
}

/** Subscribes on its own, so a new event re-renders the indicator and nothing else. */
export function LiveConnectionStatus({ outbox }: { outbox: Outbox }) {
  return <ConnectionStatus view={useOutboxView(outbox)} />;
}
