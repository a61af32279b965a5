import { useParams } from 'react-router-dom';
import { GasTestTask } from '@client/features/gas-tests';
import { TaskScreen } from '../components/task-screen';
import { useWatchPermit } from '@client/lib/live';

/** /permits/:id/gas-test: record one gas test, one-handed; the last instrument and place come preselected. */
export default function GasTestTaskPage() {
  const { id = '' } = useParams();
  useWatchPermit(id);
  return (
    <TaskScreen permitId={id} title={() => 'Record a gas test'} caution="Stop the work at any failing reading. ">
      {(permit) => <GasTestTask permit={permit} />}
    </TaskScreen>
  );
}
