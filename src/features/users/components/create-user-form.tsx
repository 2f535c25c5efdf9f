import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { createUserSchema, type CreateUserInput } from '../../../../shared/api/users.ts';
import { Button } from '../../../components/ui/button.tsx';
import { SelectField, TextField } from '../../../components/ui/field.tsx';
import { useCreateUser } from '../api/mutate-user.ts';

// The form sends an empty password as "none": the user then gets an invitation.
const formSchema = createUserSchema.extend({ password: z.union([z.literal(''), createUserSchema.shape.password.unwrap()]) });
type FormValues = z.infer<typeof formSchema>;

export function CreateUserForm() {
  const create = useCreateUser();
  const form = useForm<FormValues>({ resolver: zodResolver(formSchema), defaultValues: { name: '', email: '', role: 'student', password: '' } });
  const onSubmit = form.handleSubmit((v) => {
    const input: CreateUserInput = { name: v.name, email: v.email, role: v.role, ...(v.password ? { password: v.password } : {}) };
    create.mutate(input, { onSuccess: () => form.reset({ name: '', email: '', role: v.role, password: '' }) });
  });
  const e = form.formState.errors;
  return (
    <form onSubmit={onSubmit} className="grid gap-4 sm:grid-cols-2" noValidate aria-label="Create a user">
      <TextField label="Name" {...form.register('name')} error={e.name?.message} />
      <TextField label="E-mail" type="email" {...form.register('email')} error={e.email?.message} />
      <SelectField label="Role" {...form.register('role')} error={e.role?.message}>
        <option value="student">Student</option>
        <option value="instructor">Instructor</option>
        <option value="admin">Admin</option>
      </SelectField>
      <TextField
        label="Password (optional)"
        type="password"
        autoComplete="new-password"
        hint="Leave empty to e-mail an invitation link instead."
        {...form.register('password')}
        error={e.password?.message}
      />
      <div className="flex items-center gap-3 sm:col-span-2">
        <Button type="submit" disabled={create.isPending}>
          Create user
        </Button>
        <p role="status" aria-live="polite" className="text-sm">
          {create.error ? <span className="text-stop-700">{create.error.message}</span> : null}
          {create.data ? (
            <span className="text-live-700">
              Created {create.data.user.email}
              {create.data.invited ? '; an invitation is on its way.' : '.'}
            </span>
          ) : null}
        </p>
      </div>
    </form>
  );
}
