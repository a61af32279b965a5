import { useRef, useState } from 'react';
import type { UseFormRegisterReturn } from 'react-hook-form';
import type { InventoryKind } from '@shared/assets/inventory-state';
import type { InventoryItem } from '@shared/assets/types';
import { labelKindWords, readLabelText } from '@shared/assets/label-address';
import { QrScanButton } from '@client/components/qr-scan-button';

interface Props {
  kind: InventoryKind;
  /** The locks (or tags) that may be chosen: those in the store. */
  items: InventoryItem[] | undefined;
  /** Puts the chosen one into the form's field. */
  onPick: (id: string) => void;
}

/**
 * Picks the lock (or tag) being put on by scanning its label, or typing its number when there is
 * no camera: the label's address names the kind and number, matched against the store.
 */
export function ScanLabelPick({ kind, items, onPick }: Props) {
  const [said, setSaid] = useState<{ ok: boolean; text: string } | null>(null);
  const word = labelKindWords[kind].toLowerCase();
  const scanned = (text: string) => {
    const label = readLabelText(text);
    if (!label) return setSaid({ ok: false, text: `That code is not a Holdpoint label. Scan the label on the ${word}, or type its number.` });
    if (label.kind && label.kind !== kind) return setSaid({ ok: false, text: `That is the label of a ${labelKindWords[label.kind].toLowerCase()}. Scan the ${word}'s own label here.` });
    const found = items?.find((i) => i.number.toUpperCase() === label.number);
    if (!found) return setSaid({ ok: false, text: `${labelKindWords[kind]} ${label.number} is not in the store, so it cannot go on: it may be on another isolation, lost or retired. Use another ${word}.` });
    onPick(found.id);
    setSaid({ ok: true, text: `${labelKindWords[kind]} ${found.number} chosen.` });
  };
  return (
    <div className="flex flex-col gap-1">
      <QrScanButton label={`Scan the ${word}'s label`} typedLabel={`Number on the ${word}`} onResult={scanned} />
      {said ? (
        <p role={said.ok ? 'status' : 'alert'} className={`text-sm font-medium ${said.ok ? 'text-ink' : 'text-danger'}`}>
          {said.text}
        </p>
      ) : null}
    </div>
  );
}

/**
 * A registered select that a scan can set: the value goes into the control and through the form's own
 * change handler, as if the person had chosen it from the list.
 */
export function useSelectPick(field: UseFormRegisterReturn) {
  const node = useRef<HTMLSelectElement | null>(null);
  return {
    props: {
      ...field,
      ref: (el: HTMLSelectElement | null) => {
        field.ref(el);
        node.current = el;
      },
    },
    pick: (id: string) => {
      const el = node.current;
      if (!el) return;
      el.value = id;
      void field.onChange({ target: el, type: 'change' });
    },
  };
}
