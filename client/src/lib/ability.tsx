import { useMemo, type ReactNode } from 'react';
import { AbilityProvider as CaslAbilityProvider, Can, useAbility as useCaslAbility } from '@casl/react';
import { unpackRules, type PackRule } from '@casl/ability/extra';
import { abilityFromRules, type AppAbility, type AppRule } from '@shared/abilities/define-ability';
import { useMe } from '@client/features/auth/api/get-me';

const empty = abilityFromRules([]);

/** The same CASL rules the server enforces, unpacked from /api/auth/me; the server stays the authority. */
export function AbilityProvider({ children }: { children: ReactNode }) {
  const { data: me } = useMe();
  const ability = useMemo(() => (me?.rules?.length ? abilityFromRules(unpackRules(me.rules as PackRule<AppRule>[]) as AppRule[]) : empty), [me]);
  return <CaslAbilityProvider value={ability}>{children}</CaslAbilityProvider>;
}

export const useAbility = () => useCaslAbility<AppAbility>();
export { Can };
