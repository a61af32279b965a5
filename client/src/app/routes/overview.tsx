import { Link } from 'react-router-dom';
import { useAbility } from '@client/lib/ability';
import MyWorkPage from '@client/features/my-work/pages/my-work-page';
import { visibleNav } from '../navigation';

/** The start page after sign-in: "My work", with the other places lower down. */
export default function OverviewPage() {
  const ability = useAbility();
  return (
    <MyWorkPage
      whereToGo={
        <>
          <h2 className="mb-2 text-lg font-semibold">Where to go</h2>
          <ul className="grid gap-1 sm:grid-cols-2">
            {visibleNav(ability)
              .filter((n) => n.to !== '/')
              .map((n) => (
                <li key={n.to}>
                  <Link to={n.to} className="inline-flex min-h-11 items-center">
                    {n.label}
                  </Link>
                </li>
              ))}
          </ul>
        </>
      }
    />
  );
}
