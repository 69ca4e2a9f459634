/** A small mark beside a parameter with unresolved questions; its words are in the label, not in the colour. */
export function QuestionMarker({ state, count }: { state: 'open' | 'answered'; count: number }) {
  const text =
    state === 'open'
      ? `${count} unresolved question${count === 1 ? '' : 's'} on this parameter, waiting for an answer`
      : `${count} unresolved question${count === 1 ? '' : 's'} on this parameter, answered and waiting to be resolved`;
  return (
    <span
      role="img"
      aria-label={text}
      title={text}
      className={`inline-flex h-4 min-w-4 shrink-0 items-center justify-center rounded-full border px-1 text-2xs leading-none font-bold ${
        state === 'open' ? 'border-amber/60 bg-amber-soft text-amber-ink' : 'border-teal/40 bg-teal-soft text-teal-ink'
      }`}
    >
      ?{count > 1 ? count : ''}
    </span>
  );
}
