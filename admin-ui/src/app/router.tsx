import { Suspense, type ReactNode } from 'react';
import { BrowserRouter, Route, Routes } from 'react-router-dom';
import { SignInRoute } from '@/features/auth/routes/sign-in';
import { LoadingState, EmptyState } from '@/components/ui/states';
import type { Permission } from '@/lib/authorization';
import { AppLayout } from './layout';
import { RequirePermission, RequireSession } from './guards';
import { routes } from './routes';

function guarded(permission: Permission, node: ReactNode) {
  return (
    <RequirePermission permission={permission}>
      <Suspense fallback={<LoadingState />}>{node}</Suspense>
    </RequirePermission>
  );
}

export function AppRouter() {
  return (
    <BrowserRouter>
      <Routes>
        <Route path="/sign-in" element={<SignInRoute />} />
        <Route
          element={
            <RequireSession>
              <AppLayout />
            </RequireSession>
          }
        >
          {routes.map(({ path, permission, component: C }) => (
            <Route key={path} path={path} element={guarded(permission, <C />)} />
          ))}
          <Route path="*" element={<EmptyState title="No such page">Check the address or use the navigation.</EmptyState>} />
        </Route>
      </Routes>
    </BrowserRouter>
  );
}
