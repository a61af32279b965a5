/** Beside a time that was written down after the event (a gas test, a check, an isolation). */
export function EnteredLate() {
  return (
    <span data-testid="entered-late" className="ml-1 inline-flex items-center rounded-full border border-caution bg-caution-soft px-2 py-0.5 text-xs font-semibold whitespace-nowrap text-ink">
      entered late
    </span>
  );
}
