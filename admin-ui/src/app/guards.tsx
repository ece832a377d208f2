import type { ReactNode } from 'react';
import { Navigate, useLocation } from 'react-router-dom';
import { useAuth } from '@/lib/auth';
import type { Permission } from '@/lib/authorization';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/states';

export function RequireSession({ children }: { children: ReactNode }) {
  const { session, loading, error, ended } = useAuth();
  const location = useLocation();
  if (loading) return <LoadingState label="Checking your session…" />;
  if (error) return <ErrorState error={error} onRetry={() => window.location.reload()} />;
  if (!session) {
    const next = encodeURIComponent(location.pathname + location.search);
    return <Navigate to={`/sign-in?next=${next}${ended ? '&ended=1' : ''}`} replace />;
  }
  return <>{children}</>;
}

export function RequirePermission({ permission, children }: { permission: Permission; children: ReactNode }) {
  const { can } = useAuth();
  if (!can(permission)) {
    return <EmptyState title="Not available for your roles">Ask an administrator if you need this screen.</EmptyState>;
  }
  return <>{children}</>;
}
