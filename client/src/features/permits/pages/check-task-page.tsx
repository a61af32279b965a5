import { useParams, useSearchParams } from 'react-router-dom';
import { checkKinds, checkKindLabels, type CheckKind } from '@shared/schemas/timed-checks.schema';
import { CheckTask } from '@client/features/gas-tests';
import { TaskScreen } from '../components/task-screen';
import { useWatchPermit } from '@client/lib/live';

const kindOf = (raw: string | null): CheckKind | undefined => checkKinds.find((k) => k === raw);

/** /permits/:id/check?kind=vent|plug|fire_watch: record one vent, plug or fire-watch check. */
export default function CheckTaskPage() {
  const { id = '' } = useParams();
  useWatchPermit(id);
  const [search] = useSearchParams();
  const kind = kindOf(search.get('kind'));
  return (
    <TaskScreen
      permitId={id}
      title={() => (kind ? `Record a ${checkKindLabels[kind].toLowerCase()}` : 'Record a check')}
      caution="Vents must carry vapour away from the work with no pressure building behind a plug; plugs crack and shrink as they dry. "
    >
      {(permit) => <CheckTask permit={permit} kind={kind} />}
    </TaskScreen>
  );
}
