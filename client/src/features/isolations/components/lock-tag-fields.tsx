import type { FieldErrors, UseFormRegister } from 'react-hook-form';
import { SelectField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useInStore } from '../api/get-inventory';
import type { ApplyForm } from '../lib/step-forms';
import { ScanLabelPick, useSelectPick } from './scan-label-pick';

interface FieldProps {
  register: UseFormRegister<ApplyForm>;
  errors: FieldErrors<ApplyForm>;
  /** Locks and tags are required on this kind of step; otherwise "none" is a choice. */
  lockNeeded: boolean;
}

/** The lock put on, chosen from the locks in the store: its own piece, so other ways of picking a lock can sit beside it. */
export function LockField({ register, errors, lockNeeded }: FieldProps) {
  const locks = useInStore('lock');
  const lockField = useSelectPick(register('lockId'));
  return (
    <>
      <SelectField
        label={lockNeeded ? 'Lock' : 'Lock (if one is used)'}
        data-autofocus
        {...lockField.props}
        error={errors.lockId?.message}
        hint={locks.data && locks.data.total > locks.data.items.length ? `Showing the first ${locks.data.items.length} of ${locks.data.total} locks in the store.` : undefined}
      >
        <option value="">{locks.isPending ? 'Loading locks…' : lockNeeded ? 'Choose a lock…' : 'No lock'}</option>
        {locks.data?.items.map((l) => (
          <option key={l.id} value={l.id}>
            {l.number}
            {l.holderName ? ` (held by ${l.holderName})` : ''}
          </option>
        ))}
      </SelectField>
      <ScanLabelPick kind="lock" items={locks.data?.items} onPick={lockField.pick} />
      {locks.data && !locks.data.items.length ? <Notice tone="caution">No locks are in the store. Return or add locks in the register first.</Notice> : null}
    </>
  );
}

/** The danger tag hung, chosen from the tags in the store. */
export function TagField({ register, errors, lockNeeded }: FieldProps) {
  const tags = useInStore('tag');
  const tagField = useSelectPick(register('tagId'));
  return (
    <>
      <SelectField label={lockNeeded ? 'Danger tag' : 'Danger tag (if one is hung)'} {...tagField.props} error={errors.tagId?.message}>
        <option value="">{tags.isPending ? 'Loading tags…' : lockNeeded ? 'Choose a tag…' : 'No tag'}</option>
        {tags.data?.items.map((t) => (
          <option key={t.id} value={t.id}>
            {t.number}
          </option>
        ))}
      </SelectField>
      <ScanLabelPick kind="tag" items={tags.data?.items} onPick={tagField.pick} />
    </>
  );
}

export function LockTagFields(props: FieldProps) {
  return (
    <>
      <LockField {...props} />
      <TagField {...props} />
    </>
  );
}
