import { rulesToCondition } from '@casl/ability/extra';
import type { Action, AppAbility, SubjectName } from '@shared/abilities/define-ability';

export interface SqlScope {
  sql: string;
  replacements: Record<string, unknown>;
}

/**
 * Turns the caller's CASL rules for (action, subject) into a SQL condition, so list queries return
 * exactly the rows the per-record check would allow. Our rules are `can` rules with equality
 * conditions on known fields; anything else throws rather than guessing (fail closed).
 */
export function scopeToSql(ability: AppAbility, action: Action, subject: Exclude<SubjectName, 'all'>, columns: Record<string, string>, prefix = 'scope'): SqlScope {
  const replacements: Record<string, unknown> = {};
  let n = 0;
  const rules = ability.rulesFor(action, subject);
  if (rules.some((r) => r.inverted)) throw new Error('scopeToSql does not translate "cannot" rules');
  const sql = rulesToCondition<AppAbility, string, string>(
    rules,
    (rule) => {
      const cond = (rule.conditions ?? {}) as Record<string, unknown>;
      const parts = Object.entries(cond).map(([field, value]) => {
        const column = columns[field];
        if (!column || (typeof value !== 'string' && typeof value !== 'number' && typeof value !== 'boolean')) throw new Error(`cannot translate a condition on ${field}`);
        const name = `${prefix}${n++}`;
        replacements[name] = value;
        return `${column} = :${name}`;
      });
      return parts.length ? `(${parts.join(' AND ')})` : 'TRUE';
    },
    {
      and: (c) => (c.length ? `(${c.join(' AND ')})` : 'TRUE'),
      or: (c) => (c.length ? `(${c.join(' OR ')})` : 'FALSE'),
      empty: () => 'TRUE',
    },
  );
  return { sql: sql ?? 'FALSE', replacements };
}
