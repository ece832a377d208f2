import { Navigate } from 'react-router-dom';
import { useAuth } from '@/lib/auth';
import { OverviewRoute } from '@/features/overview/routes/overview';

/** Reviewers and operators look at beds first; admins (and integrators) at the system. */
export function HomePage() {
  const { session } = useAuth();
  const roles = session?.user.roles ?? [];
  const boardFirst = !roles.includes('admin') && (roles.includes('reviewer') || roles.includes('operator'));
  return boardFirst ? <Navigate to="/board" replace /> : <OverviewRoute />;
}
