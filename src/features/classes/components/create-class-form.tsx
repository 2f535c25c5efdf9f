import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { createClassSchema } from '../../../../shared/api/classes.ts';
import { Button } from '../../../components/ui/button.tsx';
import { TextField } from '../../../components/ui/field.tsx';
import { useCreateClass } from '../api/create-class.ts';

type Values = z.input<typeof createClassSchema>;

export function CreateClassForm({ onCreated }: { onCreated?: (id: number) => void }) {
  const create = useCreateClass();
  const form = useForm<Values, unknown, z.output<typeof createClassSchema>>({ resolver: zodResolver(createClassSchema), defaultValues: { name: '', term: '' } });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label="Create a class"
      className="grid gap-4 sm:grid-cols-[1fr_12rem_auto] sm:items-end"
      onSubmit={form.handleSubmit((v) =>
        create.mutate(v, {
          onSuccess: (c) => {
            form.reset({ name: '', term: v.term });
            onCreated?.(c.id);
          },
        }),
      )}
    >
      <TextField label="Class name" placeholder="AUT 141 Charging Systems, Section B" {...form.register('name')} error={e.name?.message} />
      <TextField label="Term" placeholder="Spring 2027" {...form.register('term')} error={e.term?.message} />
      <Button type="submit" disabled={create.isPending}>
        Create class
      </Button>
      {create.error && (
        <p role="alert" className="text-sm text-stop-700 sm:col-span-3">
          {create.error.message}
        </p>
      )}
    </form>
  );
}
