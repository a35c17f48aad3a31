// The Railwise mark: a supply line that steps up twice (a power-up sequence) ending in a probed node.
export function LogoMark({ className = "h-7 w-7" }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true" focusable="false">
      <rect x="1" y="1" width="30" height="30" rx="7" fill="var(--rw-accent)" />
      <path
        d="M6 23h6v-5h6v-6h5"
        fill="none"
        stroke="var(--rw-on-accent)"
        strokeWidth="2.6"
        strokeLinecap="round"
        strokeLinejoin="round"
      />
      <circle cx="24.5" cy="12" r="3" fill="var(--rw-on-accent)" />
    </svg>
  );
}

export function Logo({ className = "h-7" }: { className?: string }) {
  return (
    <span className={`inline-flex items-center gap-2 ${className}`}>
      <LogoMark className="h-full w-auto" />
      <span className="text-lg font-semibold tracking-tight">Railwise</span>
    </span>
  );
}
