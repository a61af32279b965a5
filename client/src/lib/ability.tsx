import { useMemo, type ReactNode } from 'react';
import { AbilityProvider as CaslAbilityProvider, Can, useAbility as useCaslAbility } from '@casl/react';
import { unpackRules, type PackRule } from '@casl/ability/extra';
import { abilityFromRules, type AppAbility, type AppRule } from '@shared/abilities/define-ability';

const empty = abilityFromRules([]);

/**
 * The same CASL rules the server enforces, packed as the server sends them with the signed-in user;
 * the signed-in shell passes them in. The server stays the authority.
 */
export function AbilityProvider({ rules, children }: { rules: readonly unknown[] | null | undefined; children: ReactNode }) {
  const ability = useMemo(() => (rules?.length ? abilityFromRules(unpackRules(rules as PackRule<AppRule>[]) as AppRule[]) : empty), [rules]);
  return <CaslAbilityProvider value={ability}>{children}</CaslAbilityProvider>;
}

export const useAbility = () => useCaslAbility<AppAbility>();
export { Can };
