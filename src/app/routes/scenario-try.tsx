/** /scenarios/:scenarioId/try: the instructor runs the scenario's latest version on the bench, ungraded. */
import { useParams } from 'react-router-dom';
import { ErrorState, PageBody, Spinner } from '../../components/ui/states.tsx';
import { paths } from '../../config/paths.ts';
import { TryOutBench } from '../../features/bench/components/try-out-bench.tsx';
import { useScenario } from '../../features/scenarios/api/get-scenario.ts';

export function ScenarioTryPage() {
  const id = Number(useParams().scenarioId);
  const scenario = useScenario(id);
  if (scenario.isPending)
    return (
      <PageBody>
        <Spinner label="Loading the scenario" />
      </PageBody>
    );
  if (scenario.isError)
    return (
      <PageBody>
        <ErrorState error={scenario.error} retry={() => void scenario.refetch()} what="scenario" back={{ to: paths.scenarios.href(), label: 'Back to the library' }} />
      </PageBody>
    );
  return <TryOutBench key={`${id}-${scenario.data.latestVersion}`} definition={scenario.data.definition} versionLabel={`version ${scenario.data.latestVersion}`} />;
}

export const Component = ScenarioTryPage;

/** The bench fills the window below the menu. */
export const handle = { workspace: true };
