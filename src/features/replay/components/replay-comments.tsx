/** Comments on moments of a replay: each jumps to its moment; instructors add one at the current moment. */
import { useState, type FormEvent } from 'react';
import type { ReplayComment } from '../../../../shared/api/replay.ts';
import { COMMENT_MAX } from '../../../../shared/api/replay.ts';
import { Button } from '../../../components/ui/button.tsx';
import { FieldShell } from '../../../components/ui/field.tsx';
import { ApiError } from '../../../lib/api-client.ts';
import { useCreateComment } from '../api/create-comment.ts';
import { clock } from './replay-controls.tsx';

export function ReplayComments({
  attemptId,
  comments,
  canComment,
  timeMs,
  onJump,
}: {
  attemptId: number;
  comments: readonly ReplayComment[];
  canComment: boolean;
  timeMs: number;
  onJump: (ms: number) => void;
}) {
  const [body, setBody] = useState('');
  const create = useCreateComment(attemptId);
  const err = create.error instanceof ApiError ? create.error : null;

  function submit(e: FormEvent) {
    e.preventDefault();
    create.mutate({ attemptId, simTimeMs: Math.round(timeMs), body }, { onSuccess: () => setBody('') });
  }

  return (
    <div className="space-y-3">
      {comments.length === 0 ? (
        <p className="text-sm text-slate-500">No comments yet.</p>
      ) : (
        <ul className="space-y-2" aria-label="Comments">
          {comments.map((c) => (
            <li key={c.id} className="rounded-lg bg-stone-50 p-2.5 ring-1 ring-slate-200">
              <button type="button" onClick={() => onJump(c.simTimeMs)} className="font-mono text-xs font-semibold text-live-700 underline underline-offset-2" aria-label={`Go to ${clock(c.simTimeMs)}, comment by ${c.authorName}`}>
                {clock(c.simTimeMs)}
              </button>
              <span className="ml-2 text-xs text-slate-500">{c.authorName}</span>
              <p className="mt-1 whitespace-pre-wrap text-sm text-slate-800">{c.body}</p>
            </li>
          ))}
        </ul>
      )}
      {canComment && (
        <form onSubmit={submit} className="space-y-2">
          <FieldShell label={`Comment at ${clock(timeMs)}`} error={err?.message}>
            {({ id, describedBy }) => (
              <textarea
                id={id}
                aria-describedby={describedBy}
                value={body}
                maxLength={COMMENT_MAX}
                rows={3}
                onChange={(e) => setBody(e.target.value)}
                className="block w-full rounded-md bg-white px-3 py-2 text-sm ring-1 ring-slate-300 focus:ring-2 focus:ring-live-500"
              />
            )}
          </FieldShell>
          <Button type="submit" size="sm" disabled={create.isPending || body.trim() === ''}>
            Add comment
          </Button>
        </form>
      )}
    </div>
  );
}
