/**
 * The typed name of a signature matches the signer's name as shown when it differs only in letter
 * case and spacing (spaces anywhere, more or fewer of them). Anything else — another spelling, a
 * missing or added letter or full stop, an initial for a first name — does not match.
 */
export function signedNameMatches(typed: string | null | undefined, name: string): boolean {
  const fold = (s: string) => s.normalize('NFC').replace(/\s+/g, '').toLowerCase();
  return typed != null && fold(typed) !== '' && fold(typed) === fold(name);
}

export const signatureMessages = {
  name: (name: string) => `Type your name as it is shown: "${name}". Capitals and spaces do not matter; the spelling does.`,
  passwordMissing: 'Enter your password to sign.',
  passwordWrong: 'That password is wrong. Type the password you sign in with.',
} as const;
