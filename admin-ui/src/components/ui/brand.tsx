/** The Ebbgate mark: a tide line passing a gate post. */
export function BrandMark({ className = '' }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden>
      <rect width="32" height="32" rx="7" fill="#2f6577" />
      <path d="M4 19c3 0 4-6 7-6s4 9 7 9 4-12 7-12 3 6 3 6" fill="none" stroke="#f1e6c8" strokeWidth="2.6" strokeLinecap="round" strokeLinejoin="round" />
    </svg>
  );
}
