import { useCallback, useEffect, useMemo, useRef, useState, useSyncExternalStore, type FocusEvent, type RefObject } from 'react';
import { useLocation } from 'react-router-dom';
import { defaultRangeExtractor, useWindowVirtualizer, type Range } from '@tanstack/react-virtual';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import type { BoardItem } from '@shared/types/board';
import { stepInHash } from '@client/lib/board-address';
import { boardEntries, boardRowKey, groupByPipeline, type BoardEntry } from '../lib/board-entries';
import { BoardGroupHeading } from './board-group-heading';
import { BoardRow, type BoardAcknowledgement } from './board-row';

interface Props {
  items: BoardItem[];
  tenantId: string;
  unit: LocationUnit;
  timeZone: string;
  now: Date;
  onAcknowledge: (item: BoardItem, what: BoardAcknowledgement) => void;
}

type Layout = 'wide' | 'medium' | 'narrow';

// The row's breakpoints (board-row.tsx): one line of seven columns from xl, two columns from sm, one below.
const wide = '(min-width: 80rem)';
const medium = '(min-width: 40rem)';
const layoutNow = (): Layout => (window.matchMedia(wide).matches ? 'wide' : window.matchMedia(medium).matches ? 'medium' : 'narrow');
const onLayoutChange = (cb: () => void) => {
  const queries = [window.matchMedia(wide), window.matchMedia(medium)];
  queries.forEach((q) => q.addEventListener('change', cb));
  return () => queries.forEach((q) => q.removeEventListener('change', cb));
};

/** First guesses before an entry is measured; near the real heights so the scrollbar hardly moves when they are. */
function estimate(entry: BoardEntry | undefined, layout: Layout) {
  if (entry?.kind === 'group') return layout === 'narrow' ? 470 : 440;
  return layout === 'wide' ? 112 : layout === 'medium' ? 230 : 420;
}

/** The list's distance from the top of the document, which the window virtualizer needs (null until measured); it moves when anything above it changes height. */
function useDocumentTop(ref: RefObject<HTMLElement | null>) {
  const [top, setTop] = useState<number | null>(null);
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    const update = () => setTop(Math.round(el.getBoundingClientRect().top + window.scrollY));
    // A ResizeObserver reports once as it starts observing, so no first call is needed. The body grows with
    // anything above the list on a long page; the list's own column also covers a page shorter than the screen.
    const observer = new ResizeObserver(update);
    observer.observe(document.body);
    if (el.parentElement) observer.observe(el.parentElement);
    window.addEventListener('resize', update);
    return () => {
      observer.disconnect();
      window.removeEventListener('resize', update);
    };
  }, [ref]);
  return top;
}

/**
 * The board as one virtual list scrolled by the page: each pipeline's heading followed by its rows.
 * Only the entries near the screen are in the page, so thousands of isolations scroll smoothly;
 * each is measured once drawn, since rows grow with their text and the width of the screen.
 */
export function BoardList({ items, tenantId, unit, timeZone, now, onAcknowledge }: Props) {
  const listRef = useRef<HTMLUListElement>(null);
  const top = useDocumentTop(listRef);
  const layout = useSyncExternalStore(onLayoutChange, layoutNow);
  const entries = useMemo(() => boardEntries(groupByPipeline(items)), [items]);

  // The entry holding keyboard focus stays in the page even when scrolled away, so focus is not dropped.
  const [focusKey, setFocusKey] = useState<string | null>(null);
  const focusIndex = useMemo(() => (focusKey ? entries.findIndex((e) => e.key === focusKey) : -1), [entries, focusKey]);
  const rangeExtractor = useCallback(
    (range: Range) => {
      const indexes = defaultRangeExtractor(range);
      return focusIndex < 0 || indexes.includes(focusIndex) ? indexes : [...indexes, focusIndex].sort((a, b) => a - b);
    },
    [focusIndex],
  );
  const onFocus = (e: FocusEvent<HTMLUListElement>) => {
    const slot = e.target.closest<HTMLElement>('[data-index]');
    setFocusKey(slot ? (entries[Number(slot.dataset.index)]?.key ?? null) : null);
  };
  const onBlur = (e: FocusEvent<HTMLUListElement>) => {
    // Focus moving into a dialog opened from a row comes back to it on close; focus moving anywhere else on the page lets the entry go.
    const next = e.relatedTarget;
    if (next instanceof Element && !e.currentTarget.contains(next) && !next.closest('dialog')) setFocusKey(null);
  };

  const [shownPermits, setShownPermits] = useState<Record<string, string>>({});
  const onShowPermit = useCallback((pipelineId: string, permitId: string) => setShownPermits((s) => ({ ...s, [pipelineId]: permitId })), []);

  const estimateSize = useCallback((i: number) => estimate(entries[i], layout), [entries, layout]);
  const getItemKey = useCallback((i: number) => entries[i]?.key ?? i, [entries]);
  const virtualizer = useWindowVirtualizer<HTMLLIElement>({
    count: entries.length,
    estimateSize,
    getItemKey,
    overscan: 6,
    scrollMargin: top ?? 0,
    rangeExtractor,
  });

  // An address naming a step (My work's "Acknowledge …", see boardStepAddress) names the row the person came for:
  // on a long board it is seldom on the first screen, and rows off the screen are not in the page, so bring it
  // on screen once, as soon as it is on the board and the list's place on the page is known.
  const step = stepInHash(useLocation().hash);
  const wanted = step ? boardRowKey(step) : null;
  const shown = useRef<string | null>(null);
  useEffect(() => {
    if (!wanted || shown.current === wanted || top === null) return;
    const index = entries.findIndex((e) => e.key === wanted);
    if (index < 0) return;
    shown.current = wanted;
    virtualizer.scrollToIndex(index, { align: 'center' });
  }, [wanted, entries, top, virtualizer]);

  // Heights measured at another breakpoint are wrong for entries not on screen now; start again from the estimates.
  useEffect(() => {
    virtualizer.measure();
  }, [layout, virtualizer]);

  const margin = virtualizer.options.scrollMargin;
  return (
    <ul
      ref={listRef}
      role="list"
      aria-label="Isolations in place, by pipeline and position"
      className="relative min-w-0 [overflow-anchor:none]"
      style={{ height: virtualizer.getTotalSize() }}
      onFocus={onFocus}
      onBlur={onBlur}
    >
      {virtualizer.getVirtualItems().map((v) => {
        const entry = entries[v.index];
        if (!entry) return null;
        const slot = { index: v.index, start: v.start - margin, setSize: entries.length, measureRef: virtualizer.measureElement };
        return entry.kind === 'group' ? (
          <BoardGroupHeading key={v.key} {...slot} group={entry.group} shownPermitId={shownPermits[entry.group.pipelineId]} onShowPermit={onShowPermit} />
        ) : (
          <BoardRow key={v.key} {...slot} item={entry.item} last={entry.last} tenantId={tenantId} unit={unit} timeZone={timeZone} now={now} onAcknowledge={onAcknowledge} />
        );
      })}
    </ul>
  );
}
