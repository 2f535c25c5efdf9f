/** /deep-link/:requestId — an instructor came from the platform's "add activity": they pick a scenario, its dates and attempts. */
import { useParams } from 'react-router-dom';
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { useDeepLinkRequest } from '../../features/lti/api/get-deep-link.ts';
import { DeepLinkForm } from '../../features/lti/components/deep-link-form.tsx';
import { useScenarios } from '../../features/scenarios/api/get-scenarios.ts';

export function DeepLinkPage() {
  const id = useParams().requestId ?? '';
  const request = useDeepLinkRequest(id);
  const scenarios = useScenarios();
  if (request.isPending) return <Spinner label="Reading the platform’s request" />;
  if (request.isError) return <ErrorState error={request.error} />;
  const r = request.data;
  return (
    <>
      <PageHeader title="Add a Loadline activity" description={`For ${r.className} on ${r.platformName}. The activity becomes an assignment of this class; students open it from the course.`} />
      <Panel>
        {scenarios.isPending ? (
          <Spinner label="Loading the library" />
        ) : scenarios.isError ? (
          <ErrorState error={scenarios.error} />
        ) : (
          <DeepLinkForm request={r} scenarios={scenarios.data.map((s) => ({ id: s.id, title: s.title, publishedVersion: s.publishedVersion }))} />
        )}
      </Panel>
    </>
  );
}

export const Component = DeepLinkPage;
