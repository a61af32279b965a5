import { gasTestPlaces, type GasTestPlace } from '@shared/schemas/gas-tests.schema';

/** The instrument and place a person last tested with, kept on this device so the next test starts from them. */
export interface LastUsed {
  instrumentId: string;
  place: GasTestPlace;
  placeNote: string;
}

const keyOf = (userId: string) => `holdpoint.gas-test.last.${userId}`;

export function readLastUsed(userId: string): LastUsed | null {
  if (!userId) return null;
  try {
    const raw = JSON.parse(localStorage.getItem(keyOf(userId)) ?? 'null') as Partial<LastUsed> | null;
    if (!raw || typeof raw.instrumentId !== 'string' || !gasTestPlaces.includes(raw.place as GasTestPlace)) return null;
    return { instrumentId: raw.instrumentId, place: raw.place as GasTestPlace, placeNote: typeof raw.placeNote === 'string' ? raw.placeNote : '' };
  } catch {
    // Storage turned off or a value from an older version: start without it.
    return null;
  }
}

export function writeLastUsed(userId: string, value: LastUsed) {
  if (!userId) return;
  try {
    localStorage.setItem(keyOf(userId), JSON.stringify(value));
  } catch {
    // A full or blocked storage only costs the preselection next time.
  }
}
