import { NavLink, Outlet, useNavigate } from 'react-router-dom';
import { useAuth } from '@/lib/auth';
import { Badge } from '@/components/ui/badge';
import { BrandMark } from '@/components/ui/brand';
import { Button } from '@/components/ui/button';
import { NAV } from './nav';

export function AppLayout() {
  const { session, can, signOut } = useAuth();
  const navigate = useNavigate();
  const user = session?.user;

  return (
    <div className="grid min-h-screen grid-cols-[13.5rem_1fr] grid-rows-[auto_1fr]">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:bg-white focus:px-2">
        Skip to content
      </a>
      <header className="col-span-2 flex items-center gap-3 bg-ink-900 px-4 py-2 text-white">
        <BrandMark className="h-6 w-6" />
        <span className="font-semibold tracking-tight">Ebbgate</span>
        <span className="text-xs text-ink-300">Harrowmere General · demo</span>
        <div className="ml-auto flex items-center gap-3 text-sm">
          {user && (
            <>
              <span className="text-right leading-tight">
                <span className="block font-medium" data-testid="current-user">
                  {user.displayName}
                </span>
                <span className="block text-xs text-ink-300">{user.username}</span>
              </span>
              <span className="flex gap-1" aria-label="Roles">
                {user.roles.map((r) => (
                  <Badge key={r} tone="info">
                    {r}
                  </Badge>
                ))}
              </span>
              <Button
                size="sm"
                variant="ghost"
                className="text-white hover:bg-ink-800"
                onClick={async () => {
                  await signOut();
                  navigate('/sign-in', { replace: true });
                }}
              >
                Sign out
              </Button>
            </>
          )}
        </div>
      </header>
      <nav aria-label="Main" className="border-r border-line bg-white px-2 py-3">
        {NAV.map((group) => {
          const items = group.items.filter((i) => can(i.permission));
          if (items.length === 0) return null;
          return (
            <div key={group.label} className="mb-3">
              <p className="px-2 pb-1 text-[11px] font-semibold uppercase tracking-wider text-muted">{group.label}</p>
              <ul>
                {items.map((i) => (
                  <li key={i.to}>
                    <NavLink
                      to={i.to}
                      end={i.to === '/'}
                      className={({ isActive }) =>
                        `block rounded px-2 py-1 text-sm ${isActive ? 'bg-ink-700 font-medium text-white' : 'text-ink-900 hover:bg-ink-50'}`
                      }
                    >
                      {i.label}
                    </NavLink>
                  </li>
                ))}
              </ul>
            </div>
          );
        })}
      </nav>
      <main id="main" tabIndex={-1} className="min-w-0 px-5 py-4">
        <Outlet />
      </main>
    </div>
  );
}
