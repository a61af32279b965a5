import { Link } from 'react-router-dom';

export interface AlarmView {
  key: string;
  headline: string;
  detail: string | null;
  todo: string;
  permit: { id: string; number: string } | null;
}

interface Props {
  alarms: AlarmView[];
  onAcknowledge: (key: string) => void;
  /** False until a tap has let the page make sound: say so, so nobody relies on hearing it. */
  soundOn: boolean;
}

/**
 * Full-width alarms at the top of every signed-in screen: red (ISO 3864: stop), large type, what
 * happened, when and to which permit, and what to do. Each stays until someone on this device says
 * they have seen it.
 */
export function AlarmBanner({ alarms, onAcknowledge, soundOn }: Props) {
  if (!alarms.length) return null;
  return (
    <div className="sticky top-0 z-50 shadow-lg" data-testid="alarms">
      {alarms.map((a) => (
        <section key={a.key} role="alert" aria-live="assertive" className="border-b-4 border-white bg-danger px-4 py-3 text-white" data-testid="alarm">
          <div className="mx-auto flex max-w-7xl flex-col gap-2 md:flex-row md:items-center md:gap-4">
            <div className="flex-1">
              <p className="text-xl leading-snug font-bold md:text-2xl">{a.headline}</p>
              {a.detail ? <p className="mt-1 text-lg">{a.detail}</p> : null}
              {a.todo ? <p className="mt-1 text-lg font-semibold">{a.todo}</p> : null}
            </div>
            <div className="flex flex-wrap gap-2">
              {a.permit ? (
                <Link to={`/permits/${a.permit.id}`} className="inline-flex min-h-11 items-center rounded-md border-2 border-white px-4 text-base font-semibold text-white underline-offset-4 hover:bg-white/10">
                  Open permit {a.permit.number}
                </Link>
              ) : null}
              <button type="button" onClick={() => onAcknowledge(a.key)} className="inline-flex min-h-11 items-center rounded-md bg-white px-4 text-base font-bold text-danger hover:bg-danger-soft">
                I have seen this
              </button>
            </div>
          </div>
          {/* Last, so that when a tap turns the sound on and this line goes, nothing under the finger moves. */}
          {soundOn ? null : <p className="mx-auto mt-2 max-w-7xl text-sm">Sound is off on this device until you tap the screen once.</p>}
        </section>
      ))}
    </div>
  );
}
