import { NavLink } from 'react-router-dom';
import { permitSections } from '../lib/permit-sections';

const tab = ({ isActive }: { isActive: boolean }) =>
  `flex min-h-12 items-center rounded-md border px-3 font-semibold whitespace-nowrap no-underline ${isActive ? 'border-brand bg-brand text-white' : 'border-line bg-surface text-ink hover:bg-brand-soft'}`;

/** The summary and the permit's sections as a row of links (it scrolls sideways on a phone); the open one is marked for screen readers too. */
export function PermitSectionNav({ permitId }: { permitId: string }) {
  const base = `/permits/${encodeURIComponent(permitId)}`;
  return (
    <nav aria-label="Permit sections" className="-mx-1 min-w-0 overflow-x-auto px-1 pb-1">
      <ul className="flex gap-2">
        <li>
          <NavLink to={base} end className={tab}>
            Summary
          </NavLink>
        </li>
        {permitSections.map((s) => (
          <li key={s.slug}>
            <NavLink to={`${base}/${s.slug}`} className={tab}>
              {s.label}
            </NavLink>
          </li>
        ))}
      </ul>
    </nav>
  );
}
