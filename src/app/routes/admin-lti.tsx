/** /admin/platforms — the learning platforms that launch Loadline (LTI 1.3), and what their admins paste on their side. */
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { usePlatforms } from '../../features/lti/api/get-platforms.ts';
import { useToolConfig } from '../../features/lti/api/get-tool-config.ts';
import { PlatformForm } from '../../features/lti/components/platform-form.tsx';
import { PlatformsList } from '../../features/lti/components/platforms-table.tsx';
import { SigningKeys, ToolValues } from '../../features/lti/components/tool-values.tsx';

export function AdminPlatformsPage() {
  const tool = useToolConfig();
  const platforms = usePlatforms();
  return (
    <>
      <PageHeader
        title="Learning platforms"
        description="Courses on a registered platform open Loadline from their pages (LTI 1.3): people sign in from the course, instructors place scenarios as activities, grades go to the course’s gradebook and rosters come from the course."
      />
      <div className="space-y-6">
        <Panel title="For the platform’s admin: add Loadline as a tool with these values">
          {tool.isPending ? <Spinner label="Loading Loadline’s addresses" /> : tool.isError ? <ErrorState error={tool.error} retry={() => void tool.refetch()} /> : <ToolValues config={tool.data} />}
        </Panel>
        <Panel title="Registered platforms">
          {platforms.isPending ? (
            <Spinner label="Loading the platforms" />
          ) : platforms.isError ? (
            <ErrorState error={platforms.error} retry={() => void platforms.refetch()} />
          ) : (
            <PlatformsList platforms={platforms.data} />
          )}
        </Panel>
        <Panel title="Register a platform: the values its admin gives you">
          <PlatformForm />
        </Panel>
        <Panel title="Loadline’s signing keys">{tool.data && <SigningKeys config={tool.data} />}</Panel>
      </div>
    </>
  );
}

export const Component = AdminPlatformsPage;
