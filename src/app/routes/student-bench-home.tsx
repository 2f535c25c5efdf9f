import { EmptyState, PageHeader } from '../../components/ui/states.tsx';

/** The student's start page: assigned scenarios with their due dates, and practice. */
export function StudentBenchHome() {
  return (
    <>
      <PageHeader title="Bench" description="Your assigned scenarios and practice benches." />
      <EmptyState title="No scenarios are assigned to you yet" />
    </>
  );
}
