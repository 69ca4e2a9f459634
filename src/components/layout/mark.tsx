/** Plumbline's mark: a plumb line and its bob. */
export function Mark({ className = 'size-5' }: { className?: string }) {
  return (
    <svg aria-hidden viewBox="0 0 20 20" className={className}>
      <path d="M4 2.5h12" stroke="var(--color-ink)" strokeWidth="1.6" strokeLinecap="round" />
      <path d="M10 2.5v9.5" stroke="var(--color-ink)" strokeWidth="1.2" />
      <path d="M10 11 6.6 16.2a.8.8 0 0 0 .7 1.2h5.4a.8.8 0 0 0 .7-1.2z" fill="var(--color-teal)" />
    </svg>
  );
}
