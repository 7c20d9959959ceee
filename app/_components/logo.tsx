/** The Burstwise mark: three staggered bursts on a baseline. */
export function Logo({ className = "" }: { className?: string }) {
  return (
    <span className={`inline-flex items-center gap-2 font-semibold tracking-tight ${className}`}>
      <svg aria-hidden width="22" height="22" viewBox="0 0 22 22">
        <path d="M1 19h20" stroke="currentColor" strokeWidth="1.5" />
        <rect x="3" y="11" width="3" height="8" rx="1" fill="#b45309" />
        <rect x="9.5" y="4" width="3" height="15" rx="1" fill="#b45309" />
        <rect x="16" y="8" width="3" height="11" rx="1" fill="#3f6212" />
      </svg>
      Burstwise
    </span>
  );
}
