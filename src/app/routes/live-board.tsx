/** /classes/:classId/live — the instructor watches a class at the bench and injects faults. */
import { useParams } from 'react-router-dom';
import { ErrorState, PageHeader, Spinner } from '../../components/ui/states.tsx';
import { paths } from '../../config/paths.ts';
import { useBoard } from '../../features/live/api/get-board.ts';
import { LiveBoard, StreamBadge } from '../../features/live/components/live-board.tsx';
import { useBoardStream } from '../../features/live/hooks/use-board-stream.ts';

export function LiveBoardPage() {
  const classId = Number(useParams().classId);
  // The first load tells access apart from a dropped stream; the stream then keeps it live.
  const first = useBoard(classId);
  const board = useBoardStream(classId);
  if (first.isError) return <ErrorState error={first.error} retry={() => void first.refetch()} what="class" back={{ to: paths.classes.href(), label: 'Back to the classes' }} />;
  if (first.isPending) return <Spinner label="Opening the class board" />;
  const attempts = board.updatedAt ? board.attempts : first.data.attempts;
  const name = board.className ?? first.data.className;
  return (
    <>
      <PageHeader
        title={`${name}: live`}
        description="Running benches, updated as students work: each open bench reports its clock every few seconds and the meters show it as it is now. Idle benches are marked; a hot or cut-out pile and a burnt link are flagged. An injected fault is applied at the bench’s current time; the student is not told what changed."
        actions={<StreamBadge state={board.stream} />}
      />
      <LiveBoard attempts={attempts} />
    </>
  );
}

export const Component = LiveBoardPage;
