import { subject } from '@casl/ability';
import { checklistOpenStates } from '@shared/permit/states';
import { formatInZone } from '@shared/time/zone';
import { useAbility } from '@client/lib/ability';
import { Card } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import type { ChecklistItem, PermitDetail } from '@shared/types/permits';
import { useUpdateChecklist } from '../api/update-checklist';

function ItemList({ permit, list, items, editable, timeZone }: { permit: PermitDetail; list: 'checklist' | 'walkdown'; items: ChecklistItem[]; editable: boolean; timeZone: string }) {
  const update = useUpdateChecklist(permit.id);
  const toast = useToast();
  if (!items.length) return <p className="text-sm text-ink-soft">No items on this list.</p>;
  return (
    <ul className="flex flex-col gap-1">
      {items.map((item) => {
        const busy = update.isPending && update.variables?.key === item.key && update.variables.list === list;
        return (
          <li key={item.key} className="flex flex-col gap-0.5 border-b border-line py-1 last:border-0">
            <label className="flex min-h-11 items-start gap-3 py-2">
              <input
                type="checkbox"
                className="mt-0.5 size-5 shrink-0"
                checked={item.confirmed}
                disabled={!editable || update.isPending}
                aria-busy={busy || undefined}
                onChange={(e) =>
                  update.mutate(
                    { list, key: item.key, confirmed: e.target.checked },
                    { onError: (err) => toast('error', err.message), onSuccess: () => toast('success', e.target.checked ? `Confirmed: ${item.label}` : `No longer confirmed: ${item.label}`) },
                  )
                }
              />
              <span className="min-w-0 break-words">
                {item.label}
                {item.required ? <span className="ml-2 rounded-sm bg-caution-soft px-1 text-xs font-semibold">required</span> : null}
              </span>
            </label>
            {item.confirmed && item.confirmedByName ? (
              <p className="pl-8 text-xs text-ink-soft">
                Confirmed by {item.confirmedByName}, {formatInZone(item.confirmedAt ?? null, timeZone)}
              </p>
            ) : null}
          </li>
        );
      })}
    </ul>
  );
}

/** Before-work checks (the crew's) and, once work is complete, the walk-down (the authoriser's). */
export function ChecklistSection({ permit, timeZone }: { permit: PermitDetail; timeZone: string }) {
  const ability = useAbility();
  const record = subject('Permit', { ...permit });
  const canChecklist = checklistOpenStates.checklist.includes(permit.state) && ability.can('start_work', record);
  const canWalkdown = checklistOpenStates.walkdown.includes(permit.state) && ability.can('return_to_service', record);
  const showWalkdown = checklistOpenStates.walkdown.includes(permit.state) || permit.walkdown.some((i) => i.confirmed);

  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Checklist</h2>
      <ItemList permit={permit} list="checklist" items={permit.checklist} editable={canChecklist} timeZone={timeZone} />
      {showWalkdown ? (
        <>
          <h3 className="mt-4 mb-1 font-semibold">Walk-down before return to service</h3>
          <ItemList permit={permit} list="walkdown" items={permit.walkdown} editable={canWalkdown} timeZone={timeZone} />
        </>
      ) : null}
    </Card>
  );
}
