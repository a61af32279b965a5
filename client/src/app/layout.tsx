import { useState } from 'react';
import { Link, NavLink, Navigate, Outlet, useLocation, useNavigate } from 'react-router-dom';
import { roleLabels } from '@shared/abilities/roles';
import { useMe } from '@client/features/auth/api/get-me';
import { useSignOut, useSwitchTenant } from '@client/features/auth/api/auth-mutations';
import { AbilityProvider, useAbility } from '@client/lib/ability';
import { AlarmProvider } from '@client/lib/live';
import { Loading } from '@client/components/ui/page';
import { ConnectionStatus } from '@client/components/connection-status';
import { useMyWorkCounts } from '@client/features/my-work';
import { navCount, visibleNav } from './navigation';

/** A count beside a menu entry: read out as the link's description, so the link keeps its name. */
function NavBadge({ id, count }: { id: string; count: number }) {
  if (!count) return null;
  return (
    <>
      <span aria-hidden data-testid="nav-count" className="ml-2 inline-flex min-w-6 items-center justify-center rounded-full bg-signal px-1.5 text-sm font-bold text-ink">
        {count}
      </span>
      <span id={id} hidden>
        {count === 1 ? '1 waiting for you' : `${count} waiting for you`}
      </span>
    </>
  );
}

function Logo() {
  return (
    <Link to="/" className="flex min-h-11 items-center gap-2 text-white no-underline" aria-label="Holdpoint home">
      <svg viewBox="0 0 32 32" className="size-8" aria-hidden>
        <rect width="32" height="32" rx="6" fill="#10252f" />
        <rect x="6" y="13" width="20" height="6" fill="#f2efe6" />
        <rect x="14" y="7" width="4" height="18" rx="1" fill="#e0a526" />
      </svg>
      <span className="text-lg font-bold tracking-wide">Holdpoint</span>
    </Link>
  );
}

// The CASL rules matter only inside the signed-in shell: providing them here keeps CASL out of the entry
// chunk, so the sign-in page loads without it. They come with the signed-in user.
export function AppLayout() {
  const { data: me } = useMe();
  return (
    <AbilityProvider rules={me?.rules}>
      <AlarmProvider userId={me?.user.id} tenantId={me?.activeTenantId} timeZone={me?.activeTenant?.timeZone}>
        <Shell />
      </AlarmProvider>
    </AbilityProvider>
  );
}

function Shell() {
  const { data: me, isPending } = useMe();
  const ability = useAbility();
  const location = useLocation();
  const navigate = useNavigate();
  const signOut = useSignOut();
  const switchTenant = useSwitchTenant();
  const [menuOpen, setMenuOpen] = useState(false);
  // The same query as the "My work" page: refreshed every 30 s and on window focus.
  const work = useMyWorkCounts(Boolean(me?.activeTenantId));

  if (isPending) return <Loading label="Opening Holdpoint…" />;
  if (!me) return <Navigate to={`/sign-in?next=${encodeURIComponent(location.pathname + location.search)}`} replace />;

  const tenants = [...new Map(me.memberships.map((m) => [m.tenantId, m.tenantName])).entries()];
  const myRoles = me.memberships.filter((m) => m.tenantId === me.activeTenantId);
  const nav = visibleNav(ability);

  return (
    <div className="flex min-h-screen flex-col">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:top-2 focus:left-2 focus:z-50 focus:bg-surface focus:p-2">
        Skip to content
      </a>
      <header className="bg-brand text-white print:hidden">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-3 px-4 py-2">
          <Logo />
          <button type="button" className="ml-auto min-h-11 rounded-md border border-white/40 px-3 md:hidden" aria-expanded={menuOpen} aria-controls="main-nav" aria-describedby={work.data?.total ? 'menu-count' : undefined} onClick={() => setMenuOpen((o) => !o)}>
            Menu
            <NavBadge id="menu-count" count={work.data?.total ?? 0} />
          </button>
          <nav id="main-nav" aria-label="Main" className={`${menuOpen ? 'flex' : 'hidden'} w-full flex-col gap-1 md:flex md:w-auto md:flex-row md:flex-wrap md:items-center`}>
            {nav.map((item) => {
              const count = navCount(item, work.data);
              const countId = `nav-count-${item.to.replace(/\W+/g, '-')}`;
              return (
                <NavLink
                  key={item.to}
                  to={item.to}
                  end={item.to === '/'}
                  aria-describedby={count ? countId : undefined}
                  onClick={() => setMenuOpen(false)}
                  className={({ isActive }) => `flex min-h-11 items-center rounded-md px-3 font-medium whitespace-nowrap text-white no-underline hover:bg-white/10 ${isActive ? 'bg-white/15 underline decoration-signal decoration-2 underline-offset-4' : ''}`}
                >
                  {item.label}
                  <NavBadge id={countId} count={count} />
                </NavLink>
              );
            })}
          </nav>
          <div className={`${menuOpen ? 'flex' : 'hidden'} w-full flex-wrap items-center gap-2 md:ml-auto md:flex md:w-auto`}>
            {tenants.length > 1 ? (
              <label className="flex items-center gap-2 text-sm">
                <span>Tenant</span>
                <select
                  className="min-h-11 rounded-md bg-white px-2 text-ink"
                  value={me.activeTenantId ?? ''}
                  onChange={(e) => switchTenant.mutate(e.target.value, { onSuccess: () => navigate('/') })}
                >
                  {tenants.map(([id, name]) => (
                    <option key={id} value={id}>
                      {name}
                    </option>
                  ))}
                </select>
              </label>
            ) : (
              <span className="text-sm">{me.activeTenant?.name}</span>
            )}
            <span className="text-sm" data-testid="who">
              {me.user.name} · {myRoles.map((m) => roleLabels[m.role]).join(', ')}
            </span>
            <button type="button" className="min-h-11 rounded-md border border-white/40 px-3 hover:bg-white/10" onClick={() => signOut.mutate(undefined, { onSettled: () => navigate('/sign-in') })}>
              Sign out
            </button>
          </div>
        </div>
      </header>
      {me.activeTenant ? <ConnectionStatus userId={me.user.id} timeZone={me.activeTenant.timeZone} /> : null}
      <main id="main" className="mx-auto w-full max-w-7xl flex-1 px-4 py-6">
        <Outlet />
      </main>
      <footer className="border-t border-line px-4 py-3 text-center text-xs text-ink-soft">
        Holdpoint records and checks the permit and isolation process; it does not replace the operator&apos;s procedures, local codes, or a competent person&apos;s judgement.
      </footer>
    </div>
  );
}
