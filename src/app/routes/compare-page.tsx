/**
 * /assignments/:assignmentId/compare — the instructor compares the class's
 * diagnosis times, accuracy and mistakes, signs off competencies and exports
 * grades; a student sees where they stand, without anyone's name.
 */
import { useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import type { InstructorCompare, StudentCompare } from '../../../shared/api/compare.ts';
import { Button } from '../../components/ui/button.tsx';
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { useMe } from '../../features/auth/api/get-me.ts';
import { gradesCsvUrl, useCompare } from '../../features/compare/api/get-compare.ts';
import { AccuracyTables } from '../../features/compare/components/accuracy-tables.tsx';
import { CompareTable, formatMinutes } from '../../features/compare/components/compare-table.tsx';
import { DiagnosisDistribution } from '../../features/compare/components/diagnosis-distribution.tsx';
import { SignOffForm } from '../../features/compare/components/sign-off-form.tsx';
import { GradeSyncPanel } from '../../features/lti/components/grade-sync-panel.tsx';
import { signOffsCsvUrl } from '../../features/progress/api/get-progress.ts';
import { paths } from '../../config/paths.ts';

function SignOffAction({ attemptId, studentName, graded }: { attemptId: number; studentName: string; graded: boolean }) {
  const [open, setOpen] = useState(false);
  if (!graded) return null;
  return open ? (
    <SignOffForm attemptId={attemptId} studentName={studentName} onDone={() => setOpen(false)} />
  ) : (
    <Button size="sm" variant="ghost" className="ml-2" onClick={() => setOpen(true)} aria-label={`Sign off a competency for ${studentName}`}>
      Sign off…
    </Button>
  );
}

const exportClass = 'inline-flex items-center rounded-md bg-white px-3.5 py-2 text-sm font-medium text-slate-900 ring-1 ring-slate-300 hover:bg-slate-50';

function InstructorView({ data }: { data: InstructorCompare }) {
  const a = data.assignment;
  return (
    <>
      <PageHeader
        title={`${a.title}: class comparison`}
        description={`${a.className} · ${a.scenarioTitle} · ${a.submitted} of ${a.enrolled} students submitted. Each student counts with their latest submitted attempt.`}
        actions={
          <>
            <a href={gradesCsvUrl(a.assignmentId)} download className={exportClass}>
              Export grades (CSV)
            </a>
            <a href={signOffsCsvUrl(a.classId)} download className={exportClass}>
              Export class sign-offs (CSV)
            </a>
          </>
        }
      />
      <div className="space-y-6">
        <Panel title="Diagnosis times">
          <DiagnosisDistribution distribution={data.distribution} />
        </Panel>
        <Panel title="Accuracy">
          <AccuracyTables byFault={data.accuracyByFault} byTest={data.accuracyByTest} />
        </Panel>
        <CompareTable
          rows={data.rows}
          action={(r) => (
            <>
              <Link to={paths.studentProgress.href(r.studentId)} className="ml-3 font-medium text-slate-700 underline underline-offset-2">
                Progress<span className="sr-only"> of {r.studentName}</span>
              </Link>
              <SignOffAction attemptId={r.attemptId} studentName={r.studentName} graded={r.grade !== null} />
            </>
          )}
        />
        <GradeSyncPanel assignmentId={a.assignmentId} />
      </div>
    </>
  );
}

function StudentView({ data }: { data: StudentCompare }) {
  const a = data.assignment;
  const d = data.distribution;
  return (
    <>
      <PageHeader title={`${a.title}: where you stand`} description={`${a.className} · ${a.submitted} of ${a.enrolled} students have submitted. Classmates are shown without names.`} />
      <div className="space-y-6">
        <Panel title="Diagnosis times">
          <DiagnosisDistribution distribution={d} />
        </Panel>
        <Panel title="Your attempt">
          {data.mine ? (
            <p className="text-sm text-slate-700">
              You diagnosed in <span className="font-mono font-semibold text-live-700">{formatMinutes(data.mine.timeToDiagnosisMs)}</span>
              {d.myPlace !== null && ` — place ${d.myPlace} of ${d.timesMs.length}`}
              {data.mine.grade !== null && `, grade ${Math.round(data.mine.grade)}`}.
            </p>
          ) : (
            <p className="text-sm text-slate-600">Submit an attempt to see your place.</p>
          )}
        </Panel>
      </div>
    </>
  );
}

export function ComparePage() {
  const assignmentId = Number(useParams().assignmentId);
  const q = useCompare(assignmentId);
  const role = useMe().data?.user?.role;
  if (q.isPending) return <Spinner label="Comparing the class" />;
  if (q.isError) return <ErrorState error={q.error} retry={() => void q.refetch()} what="assignment" back={role === 'student' ? { to: paths.bench.href(), label: 'Back to the bench list' } : { to: paths.classes.href(), label: 'Back to the classes' }} />;
  return q.data.viewer === 'instructor' ? <InstructorView data={q.data} /> : <StudentView data={q.data} />;
}

export const Component = ComparePage;
