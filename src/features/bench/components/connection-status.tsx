/** "All saved" or how many events wait for the network. */
import { memo } from 'react';
import type { Outbox, OutboxView } from '../api/event-outbox.ts';
import { useOutboxView } from '../hooks/use-bench-session.ts';

export function connectionText(v: OutboxView): string {
  if (v.status === 'saved') return 'All saved';
  if (v.status === 'offline') return `Offline — ${v.pending} event${v.pending === 1 ? '' : 's'} waiting`;
  // While online the count changes with every event; the words do not need to.
  return 'Saving…';
}


/** Subscribes on its own, so a new event re-renders the indicator and nothing else, and only when its words change. */
export function LiveConnectionStatus({ outbox }: { outbox: Outbox }) {
  const view = useOutboxView(outbox);
  return <StatusView text={connectionText(view)} status={view.status} />;
}

const StatusView = memo(function StatusView({ text, status }: { text: string; status: OutboxView['status'] }) {
  const tone = status === 'offline' ? 'bg-warn-100 text-warn-700 ring-warn-500/40' : 'bg-white text-slate-600 ring-slate-200';
  const dot = status === 'offline' ? 'bg-warn-500' : status === 'saved' ? 'bg-live-500' : 'bg-slate-400';
  return (
    <p role="status" data-testid="connection-status" className={`inline-flex items-center gap-2 rounded-full px-3 py-1 text-xs font-medium ring-1 ${tone}`}>
      <span className={`h-2 w-2 rounded-full ${dot}`} aria-hidden="true" />
      {text}
    </p>
  );
});
