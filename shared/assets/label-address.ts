/**
 * The address a lock or tag label's QR code carries: `<public address>/scan/lock/<number>`. It holds
 * only the number stamped on the lock, never a secret: opening it still needs a sign-in and the
 * tenant's rights. Numbers are register codes (letters, digits and . _ / -), so "/" is escaped.
 */
import type { InventoryKind } from './inventory-state';

export const labelKinds = ['lock', 'tag'] as const satisfies readonly InventoryKind[];

export const labelKindWords: Record<InventoryKind, string> = { lock: 'Lock', tag: 'Danger tag' };

/** The path inside Holdpoint that a label opens (also the client's scan page). */
export const scanPath = (kind: InventoryKind, number: string) => `/scan/${kind}/${encodeURIComponent(number)}`;

/** The whole address printed into the QR code. */
export function labelAddress(publicUrl: string, kind: InventoryKind, number: string): string {
  return `${publicUrl.replace(/\/+$/, '')}${scanPath(kind, number)}`;
}

export interface ScannedLabel {
  kind: InventoryKind | null;
  number: string;
}

const SCAN_PATH = /\/scan\/(lock|tag)\/([^/?#]+)\/?(?:[?#].*)?$/i;

/**
 * What a scanned or typed code names. A label's address gives its kind and number; anything else
 * is taken as a number typed by hand (kind unknown). Returns null for text that cannot be a number.
 * Register numbers are kept in capitals, so the result is too.
 */
export function readLabelText(text: string): ScannedLabel | null {
  const trimmed = text.trim();
  if (!trimmed) return null;
  const m = SCAN_PATH.exec(trimmed);
  if (m) {
    let number: string;
    try {
      number = decodeURIComponent(m[2]);
    } catch {
      return null;
    }
    return isNumberLike(number) ? { kind: m[1].toLowerCase() as InventoryKind, number: number.toUpperCase() } : null;
  }
  return isNumberLike(trimmed) ? { kind: null, number: trimmed.toUpperCase() } : null;
}

// The register's own rule for numbers (shared/schemas/assets.schema.ts codeField), up to 40 characters.
const isNumberLike = (s: string) => /^[A-Za-z0-9][A-Za-z0-9._/-]{0,39}$/.test(s);
