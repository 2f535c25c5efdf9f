import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { addStudentSchema, type AddStudentInput, type ClassDetail } from '../../../../shared/api/classes.ts';
import { Button } from '../../../components/ui/button.tsx';
import { TextField } from '../../../components/ui/field.tsx';
import { EmptyState } from '../../../components/ui/states.tsx';
import { useAddStudent, useRemoveStudent, useResendStudentInvite } from '../api/class-students.ts';

function AddStudentForm({ classId }: { classId: number }) {
  const add = useAddStudent();
  const form = useForm<AddStudentInput>({ resolver: zodResolver(addStudentSchema), defaultValues: { email: '', name: '' } });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label="Add a student"
      className="grid gap-3 sm:grid-cols-[1fr_1fr_auto] sm:items-end"
      onSubmit={form.handleSubmit((v) => add.mutate({ classId, email: v.email, ...(v.name ? { name: v.name } : {}) }, { onSuccess: () => form.reset({ email: '', name: '' }) }))}
    >
      <TextField label="Student e-mail" type="email" {...form.register('email')} error={e.email?.message} />
      <TextField label="Name (for a new student)" {...form.register('name', { setValueAs: (v: string) => (v.trim() === '' ? undefined : v) })} error={e.name?.message} />
      <Button type="submit" variant="secondary" disabled={add.isPending}>
        Add student
      </Button>
      <p role="status" aria-live="polite" className="text-sm sm:col-span-3">
        {add.error && <span className="text-stop-700">{add.error.message}</span>}
        {add.data && (
          <span className="text-live-700">
            {add.data.student.email} added{add.data.invited ? '; an invitation is on its way.' : '.'}
          </span>
        )}
      </p>
    </form>
  );
}

function StudentRow({ classId, student }: { classId: number; student: ClassDetail['students'][number] }) {
  const remove = useRemoveStudent();
  const invite = useResendStudentInvite();
  return (
    <tr>
      <td className="px-3 py-2">
        <span className="block font-medium">{student.name}</span>
        <span className="block break-all text-xs text-slate-600">{student.email}</span>
      </td>
      <td data-label="Status" className="px-3 py-2 text-sm">{student.hasPassword ? 'Active' : <span className="text-slate-500">Invited</span>}</td>
      <td className="px-3 py-2 text-right">
        <span className="flex flex-wrap justify-end gap-1 max-sm:justify-start">
        {!student.hasPassword && (
          <Button size="sm" variant="ghost" disabled={invite.isPending} onClick={() => invite.mutate({ classId, userId: student.id })}>
            {invite.isSuccess ? 'Sent' : 'Resend invite'}
            <span className="sr-only"> to {student.name}</span>
          </Button>
        )}
        <Button size="sm" variant="secondary" disabled={remove.isPending} onClick={() => remove.mutate({ classId, userId: student.id })}>
          Remove<span className="sr-only"> {student.name} from the class</span>
        </Button>
        </span>
      </td>
    </tr>
  );
}

export function StudentsPanel({ cls }: { cls: ClassDetail }) {
  return (
    <div className="space-y-4">
      <AddStudentForm classId={cls.id} />
      {cls.students.length === 0 ? (
        <EmptyState title="No students yet">Add them one at a time or upload a roster.</EmptyState>
      ) : (
        <div className="overflow-x-auto rounded-lg ring-1 ring-slate-200">
          <table className="stack-table min-w-full divide-y divide-slate-200 bg-white text-sm" aria-label="Students">
            <thead className="bg-slate-50 text-left text-xs font-semibold uppercase tracking-wide text-slate-600">
              <tr>
                <th scope="col" className="px-3 py-2">Student</th>
                <th scope="col" className="px-3 py-2">Status</th>
                <th scope="col" className="px-3 py-2 text-right">
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            </thead>
            <tbody className="divide-y divide-slate-100">
              {cls.students.map((s) => (
                <StudentRow key={s.id} classId={cls.id} student={s} />
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
