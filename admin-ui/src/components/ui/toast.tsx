import { createContext, useCallback, useContext, useMemo, useRef, useState, type ReactNode } from 'react';

type ToastTone = 'success' | 'error' | 'info';
interface Toast {
  id: number;
  tone: ToastTone;
  text: string;
}

const ToastContext = createContext<((tone: ToastTone, text: string) => void) | null>(null);

const toneClass: Record<ToastTone, string> = {
  success: 'border-valid/40 bg-valid-bg text-valid',
  error: 'border-error/40 bg-error-bg text-error',
  info: 'border-ink-300 bg-ink-50 text-ink-900',
};

export function ToastProvider({ children }: { children: ReactNode }) {
  const [toasts, setToasts] = useState<Toast[]>([]);
  const next = useRef(1);
  const push = useCallback((tone: ToastTone, text: string) => {
    const id = next.current++;
    setToasts((t) => [...t.slice(-3), { id, tone, text }]);
    // Errors stay until dismissed: they usually need reading.
    if (tone !== 'error') window.setTimeout(() => setToasts((t) => t.filter((x) => x.id !== id)), 5_000);
  }, []);
  return (
    <ToastContext.Provider value={push}>
      {children}
      <div aria-live="polite" className="fixed bottom-4 right-4 z-50 flex w-96 flex-col gap-2">
        {toasts.map((t) => (
          <div
            key={t.id}
            role={t.tone === 'error' ? 'alert' : 'status'}
            className={`flex items-start gap-2 rounded border px-3 py-2 text-sm shadow ${toneClass[t.tone]}`}
          >
            <span className="flex-1">{t.text}</span>
            <button
              type="button"
              aria-label="Dismiss"
              className="leading-none opacity-70 hover:opacity-100"
              onClick={() => setToasts((x) => x.filter((y) => y.id !== t.id))}
            >
              ×
            </button>
          </div>
        ))}
      </div>
    </ToastContext.Provider>
  );
}

export function useToast() {
  const push = useContext(ToastContext);
  if (!push) throw new Error('useToast outside ToastProvider');
  return useMemo(
    () => ({
      success: (text: string) => push('success', text),
      error: (text: string) => push('error', text),
      info: (text: string) => push('info', text),
    }),
    [push],
  );
}
