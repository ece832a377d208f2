import { createContext, useCallback, useContext, useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Role, Session, SignIn } from '@ebbgate/shared';
import { api, ApiError, onUnauthorized, setCsrfToken } from './api-client';
import { can, type Permission } from './authorization';

export const sessionKey = ['auth', 'session'] as const;

/** Renew this long before the 15-minute session runs out. */
const RENEW_AHEAD_MS = 60_000;
/** Only renew for someone who used the console recently; an unattended screen is left to expire. */
const IDLE_LIMIT_MS = 10 * 60_000;

async function fetchSession(): Promise<Session | null> {
  try {
    return await api.get<Session>('/auth/session');
  } catch (err) {
    if (err instanceof ApiError && err.status === 401) return null;
    throw err;
  }
}

interface AuthValue {
  session: Session | null;
  loading: boolean;
  error: unknown;
  roles: readonly Role[];
  /** True after a session ended on its own (expiry, 401), so sign-in can say why it is shown. */
  ended: boolean;
  can: (p: Permission) => boolean;
  signIn: ReturnType<typeof useSignIn>;
  signOut: () => Promise<void>;
}

const AuthContext = createContext<AuthValue | null>(null);

function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SignIn) => api.post<Session>('/auth/sign-in', body),
    onSuccess: (session) => {
      setCsrfToken(session.csrfToken);
      qc.setQueryData(sessionKey, session);
    },
  });
}

export function AuthProvider({ children }: { children: ReactNode }) {
  const qc = useQueryClient();
  const query = useQuery({ queryKey: sessionKey, queryFn: fetchSession, staleTime: Infinity, retry: 1 });
  const session = query.data ?? null;
  const signIn = useSignIn();
  // Set when the provider mounts (an effect, not render: reading the clock during render is impure).
  const lastActivity = useRef(0);
  const [ended, setEnded] = useState(false);

  useEffect(() => {
    if (session) setCsrfToken(session.csrfToken);
  }, [session]);

  const endSession = useCallback(
    (byUser = false) => {
      if (!byUser && qc.getQueryData(sessionKey)) setEnded(true);
      setCsrfToken(null);
      qc.setQueryData(sessionKey, null);
      // Nothing cached under the previous user may be shown to the next one.
      qc.removeQueries({ predicate: (q) => q.queryKey[0] !== 'auth' });
    },
    [qc],
  );

  useEffect(() => onUnauthorized(() => endSession()), [endSession]);

  useEffect(() => {
    const mark = () => {
      lastActivity.current = Date.now();
    };
    mark();
    window.addEventListener('pointerdown', mark);
    window.addEventListener('keydown', mark);
    return () => {
      window.removeEventListener('pointerdown', mark);
      window.removeEventListener('keydown', mark);
    };
  }, []);

  // Session renewal: shortly before expiry, renew if the user was active; otherwise let it lapse.
  useEffect(() => {
    if (!session) return;
    const expiresAt = new Date(session.expiresAt).getTime();
    const wait = Math.max(1_000, expiresAt - Date.now() - RENEW_AHEAD_MS);
    const timer = window.setTimeout(async () => {
      if (Date.now() - lastActivity.current > IDLE_LIMIT_MS) {
        window.setTimeout(() => endSession(), Math.max(0, expiresAt - Date.now()));
        return;
      }
      try {
        const renewed = await api.post<Session>('/auth/renew');
        setCsrfToken(renewed.csrfToken);
        qc.setQueryData(sessionKey, renewed);
      } catch {
        endSession();
      }
    }, wait);
    return () => window.clearTimeout(timer);
  }, [session, qc, endSession]);

  const signOut = useCallback(async () => {
    try {
      await api.post('/auth/sign-out');
    } finally {
      endSession(true);
    }
  }, [endSession]);

  const value = useMemo<AuthValue>(() => {
    const roles = session?.user.roles ?? [];
    return { session, loading: query.isPending, error: query.error, roles, ended, can: (p) => can(roles, p), signIn, signOut };
  }, [session, query.isPending, query.error, ended, signIn, signOut]);

  return <AuthContext.Provider value={value}>{children}</AuthContext.Provider>;
}

export function useAuth(): AuthValue {
  const v = useContext(AuthContext);
  if (!v) throw new Error('useAuth outside AuthProvider');
  return v;
}
