import { ForbiddenError, subject as caslSubject } from '@casl/ability';
import type { Action, AppAbility, SubjectName } from '@shared/abilities/define-ability';
import { AppError } from '../errors/app-error';

/** Checks one record; a record the caller may not even read answers 404 so its existence stays hidden. */
export function authorizeRecord<T extends object>(ability: AppAbility, action: Action, type: Exclude<SubjectName, 'all'>, record: T | null | undefined, what: string): T {
  if (!record) throw AppError.notFound(what);
  const subj = caslSubject(type, { ...record });
  if (!ability.can('read', subj)) throw AppError.notFound(what);
  ForbiddenError.from(ability).setMessage(`Your role does not allow you to ${action.replace(/_/g, ' ')} this ${what}.`).throwUnlessCan(action, subj);
  return record;
}

/** Checks a kind of thing (no record yet), e.g. "may this caller create a pipeline in their tenant?". */
export function authorizeType(ability: AppAbility, action: Action, type: Exclude<SubjectName, 'all'>, fields: Record<string, unknown>, what: string) {
  ForbiddenError.from(ability).setMessage(`Your role does not allow you to ${action.replace(/_/g, ' ')} ${what}.`).throwUnlessCan(action, caslSubject(type, { ...fields }));
}
