import type { CSSProperties } from 'react';

/** Where the virtual board places one of its entries, and how it reports the entry's real height. */
export interface VirtualSlot {
  index: number;
  /** Offset from the top of the list, in px. */
  start: number;
  /** How many entries the whole list has, rendered or not. */
  setSize: number;
  measureRef: (el: HTMLLIElement | null) => void;
}

export const slotClass = 'absolute inset-x-0 top-0';

/**
 * The attributes every virtual entry carries: data-index tells the virtualizer which entry was
 * measured, aria-posinset/aria-setsize let a screen reader say "n of N" though most entries are not in the page.
 */
export function slotProps({ index, start, setSize, measureRef }: VirtualSlot) {
  const style: CSSProperties = { transform: `translateY(${start}px)` };
  return { ref: measureRef, 'data-index': index, 'aria-posinset': index + 1, 'aria-setsize': setSize, style };
}
