import { useEffect, useId, useRef, useState, type ReactNode } from 'react';
import { createPortal } from 'react-dom';
import { Button } from './button';
import { TextAreaField } from './field';

interface DialogProps {
  open: boolean;
  title: string;
  onClose: () => void;
  children: ReactNode;
  footer?: ReactNode;
  wide?: boolean;
}

/** Modal dialog: traps Tab inside, closes on Escape, gives focus back to where it came from. */
export function Dialog({ open, title, onClose, children, footer, wide }: DialogProps) {
  const ref = useRef<HTMLDivElement>(null);
  const titleId = useId();
  // The latest onClose, read by the key handler: a parent's re-render (a poll, a new inline
  // callback) must not re-run the opening effect, which would move focus back to the first field.
  const closeRef = useRef(onClose);
  useEffect(() => {
    closeRef.current = onClose;
  }, [onClose]);

  useEffect(() => {
    if (!open) return;
    const previous = document.activeElement as HTMLElement | null;
    const el = ref.current;
    const first = el?.querySelector<HTMLElement>('input,select,textarea,button:not([data-close])');
    (first ?? el)?.focus();
    const onKey = (e: KeyboardEvent) => {
      if (e.key === 'Escape') {
        e.stopPropagation();
        closeRef.current();
      }
      if (e.key === 'Tab' && el) {
        const items = Array.from(el.querySelectorAll<HTMLElement>('a[href],button:not([disabled]),input:not([disabled]),select,textarea,[tabindex="0"]'));
        if (items.length === 0) return;
        const firstItem = items[0]!;
        const lastItem = items[items.length - 1]!;
        if (e.shiftKey && document.activeElement === firstItem) {
          e.preventDefault();
          lastItem.focus();
        } else if (!e.shiftKey && document.activeElement === lastItem) {
          e.preventDefault();
          firstItem.focus();
        }
      }
    };
    document.addEventListener('keydown', onKey);
    return () => {
      document.removeEventListener('keydown', onKey);
      previous?.focus?.();
    };
  }, [open]);

  if (!open) return null;
  return createPortal(
    <div className="fixed inset-0 z-40 flex items-start justify-center overflow-y-auto bg-ink-950/40 p-6 pt-[8vh]">
      <div
        ref={ref}
        role="dialog"
        aria-modal="true"
        aria-labelledby={titleId}
        tabIndex={-1}
        className={`w-full rounded-md border border-line bg-white shadow-xl ${wide ? 'max-w-3xl' : 'max-w-lg'}`}
      >
        <div className="flex items-center justify-between border-b border-line px-4 py-2.5">
          <h2 id={titleId} className="text-base font-semibold">
            {title}
          </h2>
          <button data-close type="button" onClick={onClose} className="rounded px-1.5 text-lg leading-none text-muted hover:bg-ink-50" aria-label="Close">
            ×
          </button>
        </div>
        <div className="px-4 py-3">{children}</div>
        {footer && <div className="flex justify-end gap-2 border-t border-line bg-paper/60 px-4 py-2.5">{footer}</div>}
      </div>
    </div>,
    document.body,
  );
}

interface ConfirmProps {
  open: boolean;
  title: string;
  message: ReactNode;
  confirmLabel: string;
  danger?: boolean;
  /** When set, a reason (min 3 characters) must be typed; it is passed to onConfirm. */
  reasonLabel?: string;
  busy?: boolean;
  error?: string | null;
  onConfirm: (reason: string) => void;
  onClose: () => void;
}

/** Confirmation for anything that changes state for others (retry, discard, revoke, disable). */
export function ConfirmDialog(props: ConfirmProps) {
  // Mounted only while open, so every opening starts with an empty reason.
  return props.open ? <OpenConfirmDialog {...props} /> : null;
}

function OpenConfirmDialog({ title, message, confirmLabel, danger, reasonLabel, busy, error, onConfirm, onClose }: ConfirmProps) {
  const [reason, setReason] = useState('');
  const [touched, setTouched] = useState(false);
  const reasonError = reasonLabel && touched && reason.trim().length < 3 ? 'Give a reason (at least 3 characters)' : undefined;
  const submit = () => {
    setTouched(true);
    if (reasonLabel && reason.trim().length < 3) return;
    onConfirm(reason.trim());
  };
  return (
    <Dialog
      open
      title={title}
      onClose={onClose}
      footer={
        <>
          <Button onClick={onClose} disabled={busy}>
            Cancel
          </Button>
          <Button variant={danger ? 'danger' : 'primary'} onClick={submit} busy={busy}>
            {confirmLabel}
          </Button>
        </>
      }
    >
      <div className="flex flex-col gap-3 text-sm">
        <div>{message}</div>
        {reasonLabel && (
          <TextAreaField
            label={reasonLabel}
            rows={3}
            value={reason}
            error={reasonError}
            onChange={(e) => setReason(e.target.value)}
            onBlur={() => setTouched(true)}
          />
        )}
        {error && (
          <p role="alert" className="rounded border border-error/30 bg-error-bg px-2 py-1 text-error">
            {error}
          </p>
        )}
      </div>
    </Dialog>
  );
}
