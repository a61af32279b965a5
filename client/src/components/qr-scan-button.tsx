import { useEffect, useRef, useState, type KeyboardEvent } from 'react';
import { createPortal } from 'react-dom';
import { Button } from './ui/button';
import { ModalDialog } from './ui/dialog';
import { TextField } from './ui/field';
import { Notice } from './ui/notice';

interface Props {
  /** The button's words, e.g. "Scan the lock's label". */
  label?: string;
  /** What the typed fallback asks for. */
  typedLabel?: string;
  /** The decoded text of the QR code, or what the person typed instead. */
  onResult: (text: string) => void;
  variant?: 'primary' | 'secondary';
  className?: string;
}

type CameraState = { kind: 'starting' } | { kind: 'scanning' } | { kind: 'unavailable'; reason: string };

/** Why the camera cannot be used, in words a person on site can act on. */
export function cameraProblem(err: unknown): string {
  const name = err instanceof Error || err instanceof DOMException ? err.name : '';
  switch (name) {
    case 'NotAllowedError':
    case 'SecurityError':
      return 'Holdpoint is not allowed to use the camera. Allow the camera for this site in the browser settings, or type the number below.';
    case 'NotFoundError':
    case 'OverconstrainedError':
      return 'No camera was found on this device. Type the number below.';
    case 'NotReadableError':
    case 'AbortError':
      return 'The camera is busy in another app. Close that app and try again, or type the number below.';
    default:
      return 'The camera could not be started. Type the number below.';
  }
}

/**
 * A button that opens the device camera, reads the first QR code it sees and hands back its text.
 * The scanning library loads only when the button is pressed (a chunk of its own). Without a camera,
 * or without permission, the dialog says why and a typed number does the same job.
 */
export function QrScanButton({ label = 'Scan a label', typedLabel = 'Number on the label', onResult, variant = 'secondary', className = '' }: Props) {
  const [open, setOpen] = useState(false);
  return (
    <>
      <Button type="button" variant={variant} className={className} onClick={() => setOpen(true)}>
        <svg aria-hidden viewBox="0 0 24 24" className="size-5" fill="none" stroke="currentColor" strokeWidth="2">
          <path d="M4 8V5a1 1 0 0 1 1-1h3M16 4h3a1 1 0 0 1 1 1v3M20 16v3a1 1 0 0 1-1 1h-3M8 20H5a1 1 0 0 1-1-1v-3M7 12h10" />
        </svg>
        {label}
      </Button>
      {open
        ? // Outside any form on the page: the typed number's Enter must not submit the form the button sits in.
          createPortal(
            <ScanDialog
              title={label}
              typedLabel={typedLabel}
              onClose={() => setOpen(false)}
              onResult={(text) => {
                setOpen(false);
                onResult(text);
              }}
            />,
            document.body,
          )
        : null}
    </>
  );
}

function ScanDialog({ title, typedLabel, onClose, onResult }: { title: string; typedLabel: string; onClose: () => void; onResult: (text: string) => void }) {
  const video = useRef<HTMLVideoElement>(null);
  const [camera, setCamera] = useState<CameraState>({ kind: 'starting' });
  const [typed, setTyped] = useState('');
  const [typedError, setTypedError] = useState<string | undefined>();
  const resultRef = useRef(onResult);
  useEffect(() => {
    resultRef.current = onResult;
  }, [onResult]);

  useEffect(() => {
    let stopped = false;
    let stream: MediaStream | null = null;
    let controls: { stop: () => void } | null = null;
    const stopAll = () => {
      controls?.stop();
      stream?.getTracks().forEach((t) => t.stop());
    };
    (async () => {
      if (!navigator.mediaDevices?.getUserMedia) {
        setCamera({ kind: 'unavailable', reason: 'This browser cannot use the camera here (it needs a secure https connection). Type the number below.' });
        return;
      }
      try {
        const [{ BrowserQRCodeReader }, media] = await Promise.all([import('@zxing/browser'), navigator.mediaDevices.getUserMedia({ audio: false, video: { facingMode: 'environment' } })]);
        stream = media;
        const el = video.current;
        if (stopped || !el) return stopAll();
        el.srcObject = media;
        // The reader sizes its picture once, when it starts: wait until the camera has said how large its picture is.
        if (!el.videoWidth) await new Promise((resolve) => el.addEventListener('loadedmetadata', resolve, { once: true }));
        await el.play().catch(() => undefined);
        if (stopped) return stopAll();
        const reader = new BrowserQRCodeReader(undefined, { delayBetweenScanAttempts: 150 });
        controls = await reader.decodeFromVideoElement(el, (result) => {
          if (!result || stopped) return;
          stopped = true;
          stopAll();
          resultRef.current(result.getText());
        });
        if (stopped) stopAll();
        else setCamera({ kind: 'scanning' });
      } catch (err) {
        stopAll();
        if (!stopped) setCamera({ kind: 'unavailable', reason: cameraProblem(err) });
      }
    })();
    return () => {
      stopped = true;
      stopAll();
    };
  }, []);

  const submitTyped = () => {
    const text = typed.trim();
    if (!text) return setTypedError('Type the number printed on the label.');
    onResult(text);
  };
  const onKey = (e: KeyboardEvent<HTMLInputElement>) => {
    if (e.key !== 'Enter') return;
    e.preventDefault();
    submitTyped();
  };

  return (
    <ModalDialog title={title} onClose={onClose} description={<p>Hold the label&apos;s square code inside the frame. It is read by itself.</p>}>
      <div data-testid="qr-scanner" className="flex flex-col gap-3">
        {camera.kind === 'unavailable' ? (
          <Notice tone="caution" role="alert" title="The camera cannot be used">
            {camera.reason}
          </Notice>
        ) : (
          <div className="relative overflow-hidden rounded-card bg-black">
            <video ref={video} muted playsInline aria-label="Camera picture" className="aspect-square w-full object-cover" />
            <div aria-hidden className="pointer-events-none absolute inset-[15%] rounded-md border-4 border-white/80" />
            <p role="status" className="absolute inset-x-0 bottom-0 bg-black/60 px-3 py-2 text-center text-base font-semibold text-white">
              {camera.kind === 'starting' ? 'Starting the camera…' : 'Looking for a label…'}
            </p>
          </div>
        )}
        <TextField
          label={typedLabel}
          value={typed}
          autoCapitalize="characters"
          autoComplete="off"
          spellCheck={false}
          onChange={(e) => {
            setTyped(e.target.value);
            setTypedError(undefined);
          }}
          onKeyDown={onKey}
          error={typedError}
          data-autofocus={camera.kind === 'unavailable' ? true : undefined}
        />
        <div className="flex flex-wrap justify-end gap-2">
          <Button type="button" variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="button" onClick={submitTyped}>
            Use this number
          </Button>
        </div>
      </div>
    </ModalDialog>
  );
}
