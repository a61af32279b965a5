import { useEffect, useId, useState } from 'react';
import { MUD_PLUG_CAUTION } from '@shared/calc';
import { conditionForKind, conditionLabels, stepKindLabels } from '@shared/schemas/isolation.schema';
import { pointKindLabels, type LocationUnit } from '@shared/schemas/assets.schema';
import { formatPosition } from '@shared/assets/format';
import type { IsolationPoint } from '@shared/assets/types';
import { stepKindForPoint } from '@shared/isolations/step-rules';
import { workSides, type DeadEnds, type WorkSide } from '@shared/isolations/readiness';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { OutsideSection } from './outside-section';
import { usePlugUnits } from '../lib/plug-units';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import type { IsolationStep } from '@shared/types/isolations';
import { useProposePlan, useSavePlan } from '../api/plan-mutations';
import { errorsByRow, moveRow, newRowKey, rowsFromProposal, rowsFromSteps, toPlanStep, type DraftRow, type RowErrors } from '../lib/plan-draft';
import { numberOrUndefined, tempStepSchema } from '../lib/step-forms';
import { plugTargets } from './plug-record';
import { StepKindTag } from './step-badges';
import { PlanCoverage } from './plan-coverage';

export interface EditorPermit {
  id: string;
  version: number;
  fromPosition: number;
  toPosition: number;
}

interface Props {
  permit: EditorPermit;
  steps: IsolationStep[];
  /** The dead ends saved with the plan. */
  deadEnds: DeadEnds;
  points: IsolationPoint[];
  insideDiameterIn: number | null;
  unit: LocationUnit;
}

type Focus = { key: string; dir: 'up' | 'down' } | null;

/** The planner's editor for a draft permit's plan: propose, reorder, remove, add, save. */
export function PlanEditor({ permit, steps, deadEnds: savedDeadEnds, points, insideDiameterIn, unit }: Props) {
  const [rows, setRows] = useState<DraftRow[]>(() => rowsFromSteps(steps));
  const [deadEnds, setDeadEnds] = useState<DeadEnds>(savedDeadEnds);
  const [deadEndErrors, setDeadEndErrors] = useState<Partial<Record<WorkSide, string>>>({});
  const [dirty, setDirty] = useState(false);
  const [rowErrors, setRowErrors] = useState<RowErrors>({});
  const [general, setGeneral] = useState<string[]>([]);
  const [warnings, setWarnings] = useState<string[]>([]);
  const [askReplace, setAskReplace] = useState(false);
  const [focus, setFocus] = useState<Focus>(null);
  const idBase = useId();
  const buttonId = (key: string, dir: 'up' | 'down') => `${idBase}-${key}-${dir}`;
  const propose = useProposePlan(permit.id);
  const save = useSavePlan(permit.id);
  const toast = useToast();

  // After a move, keep the keyboard on the moved row: on the same arrow, or the other one when it hits an end.
  useEffect(() => {
    if (!focus) return;
    const find = (dir: 'up' | 'down') => document.getElementById(`${idBase}-${focus.key}-${dir}`) as HTMLButtonElement | null;
    const same = find(focus.dir);
    (same && !same.disabled ? same : find(focus.dir === 'up' ? 'down' : 'up'))?.focus();
  }, [focus, rows, idBase]);

  const change = (next: DraftRow[]) => {
    setRows(next);
    setDirty(true);
  };
  const move = (key: string, dir: 'up' | 'down') => {
    change(moveRow(rows, key, dir === 'up' ? -1 : 1));
    setFocus({ key, dir });
  };
  const removeRow = (key: string) => change(rows.filter((r) => r.key !== key));
  const setDiameter = (key: string, value: number | undefined) => change(rows.map((r) => (r.key === key ? { ...r, plugDiameterIn: value } : r)));

  const runProposal = () => {
    setAskReplace(false);
    propose.mutate(
      { fromPosition: permit.fromPosition, toPosition: permit.toPosition },
      {
        onSuccess: (p) => {
          change(rowsFromProposal(p.steps));
          setWarnings(p.warnings);
          setRowErrors({});
          setGeneral([]);
        },
        onError: (err) => setGeneral([err.message]),
      },
    );
  };

  const submit = () => {
    const sent = rows;
    setGeneral([]);
    setRowErrors({});
    // A dead end is declared with its reason; the server asks the same (deadEndsSchema).
    const missing = Object.fromEntries(workSides.filter((side) => deadEnds[side] !== null && (deadEnds[side] ?? '').trim().length < 3).map((side) => [side, `Say why no product can reach the work from ${side} (at least 3 characters).`]));
    setDeadEndErrors(missing);
    if (Object.keys(missing).length) return;
    const declared = Object.fromEntries(workSides.filter((side) => deadEnds[side] !== null).map((side) => [side, deadEnds[side]!.trim()]));
    // The promise, not mutate's callbacks: the saved plan has new step ids, so this editor is remounted
    // (its key) before mutate's own onSuccess would run, and the confirmation would never show.
    save.mutateAsync({ version: permit.version, steps: sent.map(toPlanStep), ...(Object.keys(declared).length ? { deadEnds: declared } : {}) }).then(
      (plan) => {
        setRows(rowsFromSteps(plan.items));
        setDirty(false);
        toast('success', `Plan saved with ${plan.items.length} step${plan.items.length === 1 ? '' : 's'}.`);
      },
      (err: Error) => {
        if (err instanceof ApiError && err.details.length) {
          const placed = errorsByRow(sent, err.details);
          setRowErrors(placed.rows);
          setGeneral([err.message, ...placed.general.filter((m) => m !== err.message)]);
        } else setGeneral([err.message]);
      },
    );
  };

  const inPlan = new Set(rows.map((r) => r.pointId).filter(Boolean));
  const addPoint = (point: IsolationPoint) => {
    const kind = stepKindForPoint[point.kind];
    change([...rows, { key: newRowKey(), pointId: point.id, kind, label: point.tagCode, position: point.position, plugDiameterIn: kind === 'plug' ? (insideDiameterIn ?? undefined) : undefined }]);
  };

  return (
    <div className="flex flex-col gap-4" data-testid="plan-editor">
      <div className="flex flex-wrap items-center gap-2">
        <Button type="button" variant="secondary" busy={propose.isPending} onClick={() => (rows.length ? setAskReplace(true) : runProposal())}>
          Propose a plan for the cut
        </Button>
        <span className="text-sm text-ink-soft">
          Work range {formatPosition(permit.fromPosition, unit)} to {formatPosition(permit.toPosition, unit)}
        </span>
      </div>
      {warnings.length ? (
        <Notice tone="caution" title="Check the proposal" role="status">
          <ul className="list-disc pl-5">
            {warnings.map((w) => (
              <li key={w}>{w}</li>
            ))}
          </ul>
        </Notice>
      ) : null}
      {general.length ? (
        <Notice tone="danger" title="The plan was not saved" role="alert">
          <ul className="list-disc pl-5">
            {general.map((m) => (
              <li key={m}>{m}</li>
            ))}
          </ul>
        </Notice>
      ) : null}

      {rows.length ? (
        <ol className="flex flex-col gap-2" aria-label="Steps of the plan, in the order they are applied">
          {rows.map((row, i) => {
            const errs = rowErrors[row.key] ?? {};
            const messages = Object.entries(errs).filter(([field]) => field !== 'plugDiameterIn');
            return (
              <li
                key={row.key}
                className={`flex min-w-0 flex-col gap-2 rounded-card border bg-surface p-3 ${Object.keys(errs).length ? 'border-danger' : 'border-line'}`}
                data-testid="plan-row"
                data-label={row.label}
              >
                <div className="flex flex-wrap items-center gap-2">
                  <span className="inline-flex size-7 items-center justify-center rounded-full bg-brand text-sm font-bold text-white" aria-hidden>
                    {i + 1}
                  </span>
                  <span className="font-bold break-all">{row.label}</span>
                  <StepKindTag kind={row.kind} />
                  <span className="text-sm text-ink-soft">
                    {formatPosition(row.position, unit)} · {conditionLabels[conditionForKind[row.kind]]}
                    {row.pointId ? '' : ' · temporary'}
                  </span>
                </div>
                {messages.length ? (
                  <ul className="text-sm font-medium text-danger" role="alert" data-testid="plan-row-error">
                    {messages.map(([field, m]) => (
                      <li key={field}>{m}</li>
                    ))}
                  </ul>
                ) : null}
                {row.kind === 'plug' ? <PlugSummary diameterIn={row.plugDiameterIn} /> : null}
                {row.kind === 'plug' ? (
                  <div className="max-w-xs">
                    <TextField
                      label={`Pipe diameter the plug fills (in), ${row.label}`}
                      type="number"
                      inputMode="decimal"
                      step="any"
                      min={0}
                      value={row.plugDiameterIn ?? ''}
                      onChange={(e) => setDiameter(row.key, numberOrUndefined(e.target.value))}
                      error={errs.plugDiameterIn}
                    />
                  </div>
                ) : null}
                <div className="flex flex-wrap gap-2">
                  <Button
                    type="button"
                    variant="secondary"
                    id={buttonId(row.key, 'up')}
                    aria-label={`Move ${row.label} up`}
                    disabled={i === 0}
                    onClick={() => move(row.key, 'up')}
                  >
                    ↑ Up
                  </Button>
                  <Button
                    type="button"
                    variant="secondary"
                    id={buttonId(row.key, 'down')}
                    aria-label={`Move ${row.label} down`}
                    disabled={i === rows.length - 1}
                    onClick={() => move(row.key, 'down')}
                  >
                    ↓ Down
                  </Button>
                  <Button type="button" variant="ghost" aria-label={`Remove ${row.label} from the plan`} onClick={() => removeRow(row.key)}>
                    Remove from plan
                  </Button>
                </div>
              </li>
            );
          })}
        </ol>
      ) : (
        <p className="rounded-card border border-dashed border-line bg-paper px-3 py-4 text-sm text-ink-soft">No steps yet. Propose a plan for the cut, or add points below.</p>
      )}

      {rows.some((r) => r.kind === 'plug') ? (
        <p className="text-sm text-ink-soft" data-testid="mud-plug-caution">
          {MUD_PLUG_CAUTION}
        </p>
      ) : null}

      <OutsideSection rows={rows} range={{ from: permit.fromPosition, to: permit.toPosition }} />

      <PlanCoverage
        rows={rows}
        range={{ from: permit.fromPosition, to: permit.toPosition }}
        unit={unit}
        deadEnds={deadEnds}
        errors={deadEndErrors}
        onChange={(next) => {
          setDeadEnds(next);
          setDirty(true);
        }}
      />

      <div className="grid gap-4 lg:grid-cols-2">
        <AddRegisterPoint points={points.filter((p) => !inPlan.has(p.id))} unit={unit} onAdd={addPoint} />
        <AddTemporaryStep insideDiameterIn={insideDiameterIn} defaultPosition={permit.fromPosition} onAdd={(row) => change([...rows, row])} />
      </div>

      <div className="flex flex-wrap items-center gap-3 border-t border-line pt-3">
        <Button type="button" busy={save.isPending} onClick={submit} disabled={!rows.length}>
          Save plan
        </Button>
        <span className="text-sm text-ink-soft" role="status">
          {dirty ? 'Unsaved changes.' : 'Saved.'}
        </span>
      </div>

      {askReplace ? (
        <ModalDialog title="Replace the plan with a proposal?" onClose={() => setAskReplace(false)} description={<p>The {rows.length} step(s) listed now are replaced. Nothing is saved until you press Save plan.</p>}>
          <div className="flex flex-wrap justify-end gap-2">
            <Button type="button" variant="secondary" onClick={() => setAskReplace(false)}>
              Keep the current steps
            </Button>
            <Button type="button" onClick={runProposal} data-autofocus>
              Replace with a proposal
            </Button>
          </div>
        </ModalDialog>
      ) : null}
    </div>
  );
}

function AddRegisterPoint({ points, unit, onAdd }: { points: IsolationPoint[]; unit: LocationUnit; onAdd: (p: IsolationPoint) => void }) {
  const [choice, setChoice] = useState('');
  const [error, setError] = useState<string | undefined>();
  const add = () => {
    const point = points.find((p) => p.id === choice);
    if (!point) return setError('Choose a point from the register.');
    setError(undefined);
    setChoice('');
    onAdd(point);
  };
  return (
    <fieldset className="flex min-w-0 flex-col gap-2 rounded-card border border-line p-3">
      <legend className="px-1 font-semibold">Add a point from the register</legend>
      <SelectField label="Isolation point" value={choice} onChange={(e) => setChoice(e.target.value)} error={error}>
        <option value="">Choose…</option>
        {points.map((p) => (
          // HSE HSG253: a check valve is never an isolation; it is listed so the planner sees why it is not offered.
          <option key={p.id} value={p.id} disabled={p.valveType === 'check'}>
            {p.tagCode} · {p.valveType === 'check' ? 'Check valve, never an isolation' : pointKindLabels[p.kind]} · {formatPosition(p.position, unit)}
          </option>
        ))}
      </SelectField>
      <Button type="button" variant="secondary" onClick={add} className="self-start">
        Add to plan
      </Button>
    </fieldset>
  );
}

/** What the planner may add at a temporary position: a mud plug (vapour barrier), or a blind or line stop (isolating devices). */
const tempKinds = ['plug', 'blind', 'line_stop'] as const;
type TempKind = (typeof tempKinds)[number];

function AddTemporaryStep({ insideDiameterIn, defaultPosition, onAdd }: { insideDiameterIn: number | null; defaultPosition: number; onAdd: (row: DraftRow) => void }) {
  const [kind, setKind] = useState<TempKind>('plug');
  const [label, setLabel] = useState('');
  const [position, setPosition] = useState<string>(String(defaultPosition));
  const [diameter, setDiameter] = useState<string>(insideDiameterIn ? String(insideDiameterIn) : '');
  const [errors, setErrors] = useState<Record<string, string>>({});
  const add = () => {
    const candidate = { tempLabel: label, tempPosition: numberOrUndefined(position), kind, plugDiameterIn: kind === 'plug' ? numberOrUndefined(diameter) : undefined };
    const parsed = tempStepSchema.safeParse(candidate);
    const found: Record<string, string> = {};
    if (!parsed.success) for (const issue of parsed.error.issues) found[issue.path[0] === 'pointId' ? (label.trim() ? 'tempPosition' : 'tempLabel') : String(issue.path[0])] ??= issue.message;
    if (kind === 'plug' && candidate.plugDiameterIn === undefined) found.plugDiameterIn ??= 'Give the pipe diameter the plug fills.';
    setErrors(found);
    if (Object.keys(found).length || !parsed.success) return;
    onAdd({ key: newRowKey(), ...parsed.data, label: parsed.data.tempLabel!, position: parsed.data.tempPosition! });
    setLabel('');
  };
  return (
    <fieldset className="flex min-w-0 flex-col gap-2 rounded-card border border-line p-3">
      <legend className="px-1 font-semibold">Add a temporary plug, blind or line stop</legend>
      <SelectField label="Kind" value={kind} onChange={(e) => setKind(e.target.value as TempKind)}>
        {tempKinds.map((k) => (
          <option key={k} value={k}>
            {stepKindLabels[k]}
          </option>
        ))}
      </SelectField>
      <TextField label="Label" value={label} onChange={(e) => setLabel(e.target.value)} error={errors.tempLabel} placeholder="Plug east of the cut" />
      <TextField label="Position" type="number" inputMode="decimal" step="any" value={position} onChange={(e) => setPosition(e.target.value)} error={errors.tempPosition} />
      {kind === 'plug' ? (
        <TextField label="Pipe diameter the plug fills (in)" type="number" inputMode="decimal" step="any" value={diameter} onChange={(e) => setDiameter(e.target.value)} error={errors.plugDiameterIn} />
      ) : null}
      <Button type="button" variant="secondary" onClick={add} className="self-start">
        Add temporary step
      </Button>
    </fieldset>
  );
}

/** What the crew will need for this plug, worked from the diameter as the planner types it. */
function PlugSummary({ diameterIn }: { diameterIn: number | undefined }) {
  const t = plugTargets(diameterIn);
  const u = usePlugUnits();
  if (!t) return null;
  return (
    <p className="text-sm" data-testid="plan-plug-targets">
      To build: {u.mass(t.bentoniteLb)} bentonite, {u.mass(t.waterLb)} water, {u.length(t.plugLengthIn)} long, {t.mudBalls === null ? 'packed by hand or in small balls (bore under about 4 in)' : `about ${t.mudBalls} balls`}.
    </p>
  );
}
