import { useState } from 'react';
import type { ToolConfig } from '../../../../shared/api/lti.ts';
import { Button } from '../../../components/ui/button.tsx';
import { useRotateKey } from '../api/rotate-key.ts';

function CopyValue({ label, value }: { label: string; value: string }) {
  const [copied, setCopied] = useState(false);
  return (
    <div className="grid gap-1 sm:grid-cols-[14rem_1fr_auto] sm:items-center">
      <dt className="text-sm font-medium text-slate-700">{label}</dt>
      <dd className="min-w-0">
        <code className="block truncate rounded bg-slate-100 px-2 py-1 font-mono text-sm text-slate-900" title={value}>
          {value}
        </code>
      </dd>
      <dd>
        <Button
          size="sm"
          variant="ghost"
          onClick={() => {
            void navigator.clipboard?.writeText(value).then(() => setCopied(true));
          }}
        >
          {copied ? 'Copied' : 'Copy'}
          <span className="sr-only"> {label}</span>
        </Button>
      </dd>
    </div>
  );
}

/** The values a platform's admin enters when adding Loadline as a tool. */
export function ToolValues({ config }: { config: ToolConfig }) {
  return (
    <dl className="space-y-2" aria-label="Values for the platform">
      <CopyValue label="Login initiation address" value={config.loginUrl} />
      <CopyValue label="Redirect address" value={config.redirectUrl} />
      <CopyValue label="Public key set (JWKS) address" value={config.jwksUrl} />
      <CopyValue label="Deep-linking address" value={config.deepLinkingUrl} />
      <CopyValue label="Target link (launch) address" value={config.targetLinkUri} />
      <CopyValue label="Tool domain" value={config.domain} />
    </dl>
  );
}

/** Loadline's signing keys: the current one, and retired ones still published until their tokens have expired. */
export function SigningKeys({ config }: { config: ToolConfig }) {
  const rotate = useRotateKey();
  return (
    <div className="space-y-3">
      <ul className="space-y-1 text-sm">
        {config.keys.map((k) => (
          <li key={k.kid} className="flex flex-wrap items-center gap-2" data-testid="signing-key">
            <code className="font-mono text-xs text-slate-700">{k.kid}</code>
            {k.current ? (
              <span className="rounded bg-live-100 px-1.5 py-0.5 text-xs font-medium text-live-700">current</span>
            ) : (
              <span className="rounded bg-slate-100 px-1.5 py-0.5 text-xs text-slate-600">retired; published until {new Date(k.publishedUntil ?? k.createdAt).toLocaleString()}</span>
            )}
            <span className="text-xs text-slate-500">made {new Date(k.createdAt).toLocaleString()}</span>
          </li>
        ))}
      </ul>
      <div className="flex items-center gap-3">
        <Button variant="secondary" size="sm" disabled={rotate.isPending} onClick={() => rotate.mutate()}>
          Rotate the signing key
        </Button>
        <p role="status" aria-live="polite" className="text-sm">
          {rotate.error && <span className="text-stop-700">{rotate.error.message}</span>}
          {rotate.isSuccess && <span className="text-live-700">A new key signs from now on; the old one stays published for an hour.</span>}
        </p>
      </div>
    </div>
  );
}
