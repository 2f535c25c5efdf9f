import { useNavigate } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { useMyAssignments } from '../../features/assignments/api/get-my-assignments.ts';
import { MyAssignmentsList } from '../../features/assignments/components/my-assignments-list.tsx';
import { usePracticeScenarios } from '../../features/scenarios/api/get-practice-scenarios.ts';
import { PracticeList } from '../../features/scenarios/components/practice-list.tsx';

/** The student's start page: assigned scenarios with their due dates, and practice. */
export function StudentBenchHome() {
  const mine = useMyAssignments();
  const practice = usePracticeScenarios();
  const navigate = useNavigate();
  return (
    <>
      <PageHeader title="Bench" description="Your assigned scenarios and practice benches. Each attempt starts on a fresh car: test, record your readings, then name the fault." />
      <div className="space-y-8">
        <section aria-labelledby="assigned-heading">
          <h2 id="assigned-heading" className="mb-3 text-lg font-semibold text-slate-900">
            Assigned to you
          </h2>
          {mine.isPending ? (
            <Spinner label="Loading your assignments" />
          ) : mine.isError ? (
            <ErrorState error={mine.error} retry={() => void mine.refetch()} />
          ) : (
            <MyAssignmentsList assignments={mine.data} onStart={(assignmentId) => void navigate(paths.benchNew.href({ assignmentId }))} />
          )}
        </section>
        <Panel title="On a real vehicle">
          <ul className="list-disc space-y-1 pl-5 text-sm text-slate-700">
            <li>Keep hands, hair, sleeves, jewellery and test leads clear of the fan and belts; an electric fan can start with the engine off.</li>
            <li>Run engines only with the exhaust extracted or the shop well ventilated.</li>
            <li>Batteries can give off explosive gas: eye protection, no sparks or flames, and connect or remove clamps with the load off.</li>
            <li>A carbon pile gets hot: load in short bursts of about 15 seconds and let it cool between tests.</li>
            <li>A fusible link that has opened protects against a fault: find the cause before replacing it with the specified link.</li>
          </ul>
          <p className="mt-2 text-xs text-slate-500">The simulator teaches the method. On a vehicle, follow the maker’s service information, local codes and your shop’s safe practice.</p>
        </Panel>
        <Panel title="Practice">
          <p className="mb-3 text-sm text-slate-600">Practice runs do not use up an assignment’s attempts: try the tests as often as you like.</p>
          {practice.isPending ? (
            <Spinner label="Loading practice scenarios" />
          ) : practice.isError ? (
            <ErrorState error={practice.error} retry={() => void practice.refetch()} />
          ) : (
            <PracticeList scenarios={practice.data} onPractise={(scenarioId) => void navigate(paths.benchNew.href({ scenarioId }))} />
          )}
        </Panel>
      </div>
    </>
  );
}
