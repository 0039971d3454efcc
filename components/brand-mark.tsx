/** The Kickdrift mark: a puck's path kicked off a contact surface, drawn as a polyline over a floor. */
export function BrandMark({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" aria-hidden="true" className={className}>
      <rect x="1" y="1" width="30" height="30" rx="7" fill="var(--kd-ink)" />
      <path d="M6 24h20" stroke="var(--kd-paper)" strokeWidth="2" strokeLinecap="round" opacity="0.55" />
      <path d="M7 9l7 12 5-7 3 4" fill="none" stroke="var(--kd-kick)" strokeWidth="2.6" strokeLinecap="round" strokeLinejoin="round" />
      <circle cx="24.5" cy="10.5" r="2.6" fill="var(--kd-paper)" />
    </svg>
  );
}
