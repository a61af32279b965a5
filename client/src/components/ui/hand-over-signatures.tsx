import type { ReactNode } from 'react';
import type { FieldErrors, UseFormRegister } from 'react-hook-form';
import { z } from 'zod';
import { signatureMessages, signedNameMatches } from '@shared/permit/signed-name';
import { TextField } from './field';

/**
 * The two signatures of a shift-change handover (OSHA 29 CFR 1910.147(f)(4)): the off-going person
 * signed in on this phone, and the oncoming person beside them with their own sign-in e-mail, name
 * and password. One set of fields for every handover form.
 */
export const handOverSignatureFields = (signer: string) => ({
  signedName: z.string().refine((v) => signedNameMatches(v, signer), signatureMessages.name(signer)),
  password: z.string().min(1, signatureMessages.passwordMissing),
  oncomingEmail: z.string().trim().min(1, 'Give the sign-in e-mail of the person taking over.'),
  oncomingName: z.string().trim().min(1, 'The person taking over types their name.'),
  oncomingPassword: z.string().min(1, 'The person taking over types their password.'),
});

export interface HandOverSignatureValues {
  signedName: string;
  password: string;
  oncomingEmail: string;
  oncomingName: string;
  oncomingPassword: string;
}

export const emptyHandOverSignatures: HandOverSignatureValues = { signedName: '', password: '', oncomingEmail: '', oncomingName: '', oncomingPassword: '' };

/** The request's signature fields from the form's. */
export const handOverSignatureBody = (v: HandOverSignatureValues) => ({
  signedName: v.signedName,
  password: v.password,
  oncoming: { email: v.oncomingEmail.trim(), signedName: v.oncomingName.trim(), password: v.oncomingPassword },
});

/** Where the server's detail paths go in the form. */
export const handOverFieldOf: Record<string, keyof HandOverSignatureValues> = {
  signedName: 'signedName', password: 'password', 'oncoming.email': 'oncomingEmail', 'oncoming.signedName': 'oncomingName', 'oncoming.password': 'oncomingPassword',
};

interface Props<T extends HandOverSignatureValues> {
  register: UseFormRegister<T>;
  errors: FieldErrors<T>;
  /** Fields of the oncoming person's own device, shown first in their part (their personal lock number). */
  oncomingFirst?: ReactNode;
}

export function HandOverSignatures<T extends HandOverSignatureValues>({ register, errors, oncomingFirst }: Props<T>) {
  // The form's own type carries these five fields; read through the shared shape.
  const reg = register as unknown as UseFormRegister<HandOverSignatureValues>;
  const err = errors as FieldErrors<HandOverSignatureValues>;
  return (
    <>
      <fieldset className="flex flex-col gap-3 rounded-card border border-line p-3">
        <legend className="px-1 text-sm font-semibold">The person taking over</legend>
        {oncomingFirst}
        <TextField label="Their sign-in e-mail" type="email" autoComplete="off" {...reg('oncomingEmail')} error={err.oncomingEmail?.message} />
        <TextField label="Their name" autoComplete="off" {...reg('oncomingName')} error={err.oncomingName?.message} />
        <TextField label="Their password" type="password" autoComplete="off" {...reg('oncomingPassword')} error={err.oncomingPassword?.message} />
      </fieldset>
      <fieldset className="flex flex-col gap-3 rounded-card border border-line p-3">
        <legend className="px-1 text-sm font-semibold">You, handing over</legend>
        <TextField label="Your name" autoComplete="off" {...reg('signedName')} error={err.signedName?.message} />
        <TextField label="Your password" type="password" autoComplete="current-password" {...reg('password')} error={err.password?.message} />
      </fieldset>
    </>
  );
}
