import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { platformInputSchema, type Platform, type PlatformInput } from '../../../../shared/api/lti.ts';
import { Button } from '../../../components/ui/button.tsx';
import { FieldShell, TextField } from '../../../components/ui/field.tsx';
import { useCreatePlatform, useUpdatePlatform } from '../api/mutate-platform.ts';

/** Deployment ids are typed one a line (or separated by commas). */
const formSchema = platformInputSchema.extend({ deploymentIds: z.string() }).transform((v, ctx): PlatformInput => {
  const ids = v.deploymentIds
    .split(/[\n,]/)
    .map((s) => s.trim())
    .filter(Boolean);
  const parsed = platformInputSchema.shape.deploymentIds.safeParse(ids);
  if (!parsed.success) {
    ctx.addIssue({ code: 'custom', path: ['deploymentIds'], message: parsed.error.issues[0]?.message ?? 'deploymentIds: check the list' });
    return z.NEVER;
  }
  return { ...v, deploymentIds: parsed.data };
});
type FormInput = z.input<typeof formSchema>;

const blank: FormInput = { name: '', issuer: '', clientId: '', authUrl: '', tokenUrl: '', jwksUrl: '', deploymentIds: '' };

export function PlatformForm({ editing, onDone }: { editing?: Platform; onDone?: () => void }) {
  const create = useCreatePlatform();
  const update = useUpdatePlatform();
  const mutation = editing ? update : create;
  const defaults: FormInput = editing ? { ...editing, deploymentIds: editing.deploymentIds.join('\n') } : blank;
  const form = useForm<FormInput, unknown, PlatformInput>({ resolver: zodResolver(formSchema), defaultValues: defaults });
  const e = form.formState.errors;
  const onSubmit = form.handleSubmit((input) => {
    if (editing) update.mutate({ id: editing.id, ...input }, { onSuccess: () => onDone?.() });
    else create.mutate(input, { onSuccess: () => form.reset(blank) });
  });
  return (
    <form onSubmit={onSubmit} noValidate aria-label={editing ? `Edit ${editing.name}` : 'Register a platform'} className="grid gap-4 sm:grid-cols-2">
      <TextField label="Name (shown to instructors)" {...form.register('name')} error={e.name?.message} />
      <TextField label="Issuer" placeholder="https://courses.example.edu" {...form.register('issuer')} error={e.issuer?.message} />
      <TextField label="Client id (the platform gave Loadline)" {...form.register('clientId')} error={e.clientId?.message} />
      <TextField label="Authorisation (OIDC auth) address" {...form.register('authUrl')} error={e.authUrl?.message} />
      <TextField label="Token address" {...form.register('tokenUrl')} error={e.tokenUrl?.message} />
      <TextField label="Public key set (JWKS) address" {...form.register('jwksUrl')} error={e.jwksUrl?.message} />
      <div className="sm:col-span-2">
        <FieldShell label="Deployment ids" error={e.deploymentIds?.message} hint="One a line, as the platform lists them.">
          {({ id, describedBy }) => (
            <textarea
              id={id}
              rows={2}
              aria-describedby={describedBy}
              aria-invalid={e.deploymentIds ? true : undefined}
              className="block w-full rounded-md border-0 bg-white px-3 py-2 font-mono text-sm text-slate-900 ring-1 ring-slate-300 focus:ring-2 focus:ring-live-500 aria-[invalid=true]:ring-stop-600"
              {...form.register('deploymentIds')}
            />
          )}
        </FieldShell>
      </div>
      <div className="flex items-center gap-3 sm:col-span-2">
        <Button type="submit" disabled={mutation.isPending}>
          {editing ? 'Save the platform' : 'Register the platform'}
        </Button>
        {editing && (
          <Button variant="ghost" onClick={onDone}>
            Cancel
          </Button>
        )}
        <p role="status" aria-live="polite" className="text-sm">
          {mutation.error && <span className="text-stop-700">{mutation.error.message}</span>}
          {!editing && create.data && <span className="text-live-700">Registered {create.data.platform.name}.</span>}
        </p>
      </div>
    </form>
  );
}
