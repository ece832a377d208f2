import { useAuth } from '@/lib/auth';
import { PageHeader } from '@/components/ui/page';

export function OverviewRoute() {
  const { session } = useAuth();
  return <PageHeader title="Overview" description={`Signed in as ${session?.user.displayName ?? ''}`} />;
}
