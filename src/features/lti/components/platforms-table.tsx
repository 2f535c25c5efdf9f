import { useState } from 'react';
import type { Platform } from '../../../../shared/api/lti.ts';
import { Button } from '../../../components/ui/button.tsx';
import { EmptyState } from '../../../components/ui/states.tsx';
import { useDeletePlatform } from '../api/mutate-platform.ts';
import { PlatformForm } from './platform-form.tsx';

function PlatformRow({ platform }: { platform: Platform }) {
  const [editing, setEditing] = useState(false);
  const [confirming, setConfirming] = useState(false);
  const remove = useDeletePlatform();
  if (editing) {
    return (
      <li className="rounded-lg p-4 ring-1 ring-slate-200">
        <PlatformForm editing={platform} onDone={() => setEditing(false)} />
      </li>
    );
  }
  return (
    <li className="rounded-lg p-4 ring-1 ring-slate-200" data-testid="platform">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div className="min-w-0">
          <p className="font-medium text-slate-900">{platform.name}</p>
          <p className="truncate text-sm text-slate-600">
            {platform.issuer} · client id <code className="font-mono">{platform.clientId}</code>
          </p>
          <p className="text-sm text-slate-600">
            Deployments: {platform.deploymentIds.map((d) => <code key={d} className="mr-1 font-mono">{d}</code>)} · {platform.accounts} people · {platform.classes} classes
          </p>
        </div>
        <div className="flex gap-1">
          <Button size="sm" variant="ghost" onClick={() => setEditing(true)}>
            Edit<span className="sr-only"> {platform.name}</span>
          </Button>
          {confirming ? (
            <>
              <Button size="sm" variant="danger" disabled={remove.isPending} onClick={() => remove.mutate(platform.id)}>
                Remove the registration
              </Button>
              <Button size="sm" variant="ghost" onClick={() => setConfirming(false)}>
                Keep it
              </Button>
            </>
          ) : (
            <Button size="sm" variant="ghost" onClick={() => setConfirming(true)}>
              Remove<span className="sr-only"> {platform.name}</span>
            </Button>
          )}
        </div>
      </div>
      {confirming && (
        <p className="mt-2 text-sm text-warn-700">
          Launches from this platform stop working and its links to classes, people and grades are forgotten. Loadline’s accounts, classes and attempts stay.
        </p>
      )}
      {remove.error && <p className="mt-2 text-sm text-stop-700">{remove.error.message}</p>}
    </li>
  );
}

export function PlatformsList({ platforms }: { platforms: Platform[] }) {
  if (platforms.length === 0) return <EmptyState title="No platform registered yet">Register the school’s learning platform below.</EmptyState>;
  return (
    <ul className="space-y-3">
      {platforms.map((p) => (
        <PlatformRow key={p.id} platform={p} />
      ))}
    </ul>
  );
}
