import type { Request, RequestHandler } from 'express';
import { uuidSchema } from '@shared/schemas/common.schema';
import type { Action, SubjectName } from '@shared/abilities/define-ability';
import { AppError } from '../errors/app-error';
import { actorOf } from './authenticate';

type Kind = Exclude<SubjectName, 'all'>;
const refusal = (action: Action, what: string) => AppError.forbidden(`Your role does not allow you to ${action.replace(/_/g, ' ')} ${what}.`);

/**
 * A first, coarse check before the request is read: may this caller ever do `action` on any of these
 * kinds of thing? A caller without the right gets 403 whatever they sent, so the answer to a bad body
 * or query never tells them how the route checks its input. The service still makes the exact check
 * (the tenant, the record's organisation) once it has the record.
 */
export function requireAbility(action: Action, types: Kind | Kind[], what: string): RequestHandler {
  const kinds = Array.isArray(types) ? types : [types];
  return (req, _res, next) => {
    const { ability } = actorOf(req);
    if (!kinds.some((kind) => ability.can(action, kind))) throw refusal(action, what);
    next();
  };
}

/**
 * The same for a route on one record (`:id`). A caller who may never do `action` on this kind is
 * answered before their input is read, the way the service would answer them: 404 when they may not
 * read this record (another tenant's, or a kind their role does not see), 403 when they may read it.
 * `read` loads the record through its service, which answers 404 for one they may not read.
 */
export function requireRecordAbility(action: Action, type: Kind, what: string, read: (req: Request, id: string) => Promise<unknown>): RequestHandler {
  return async (req, _res, next) => {
    const { ability } = actorOf(req);
    if (ability.can(action, type)) return next();
    const id = uuidSchema.safeParse(req.params.id);
    if (!ability.can('read', type) || !id.success) throw AppError.notFound(what);
    await read(req, id.data);
    throw refusal(action, `this ${what}`);
  };
}
