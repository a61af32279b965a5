/**
 * The alarm's sound and vibration. Browsers let a page make sound only after the person has touched
 * or typed on it, so the first tap or key press anywhere unlocks an AudioContext; until then an
 * alarm is shown (and vibrates where the device allows) without sound. No audio files: a Web Audio
 * oscillator plays a two-tone pattern.
 */
type AudioContextClass = typeof AudioContext;

let context: AudioContext | null = null;
/** The AudioContext's own state before a gesture lets it play (nothing to do with a permit's). */
const waitingForGesture = 'suspended' satisfies AudioContextState;
let listening = false;
const onUnlock = new Set<() => void>();

function audioClass(): AudioContextClass | null {
  if (typeof window === 'undefined') return null;
  return (window.AudioContext ?? (window as unknown as { webkitAudioContext?: AudioContextClass }).webkitAudioContext) || null;
}

function unlock() {
  const Ctx = audioClass();
  if (!Ctx) return;
  try {
    context ??= new Ctx();
    const ready = () => {
      for (const fn of onUnlock) fn();
    };
    if (context.state === waitingForGesture) void context.resume().then(ready, () => undefined);
    else ready();
  } catch {
    context = null;
  }
}

/** Waits for the first gesture that lets the page make sound; `then` hears when it has. Returns the unsubscribe. */
export function listenForAudioUnlock(then: () => void) {
  onUnlock.add(then);
  const stop = () => void onUnlock.delete(then);
  if (listening || typeof window === 'undefined') return stop;
  listening = true;
  for (const type of ['pointerdown', 'keydown', 'touchend'] as const) window.addEventListener(type, unlock, { capture: true, passive: true });
  return stop;
}

/** Whether a sound would be heard now (a gesture has unlocked audio). */
export const soundUnlocked = () => context?.state === 'running';

/** Three rising two-tone beeps (about 1.5 s), loud enough over site noise on a phone speaker. */
export function playAlarmSound() {
  if (!context || context.state !== 'running') return false;
  const start = context.currentTime + 0.05;
  const gain = context.createGain();
  gain.connect(context.destination);
  gain.gain.setValueAtTime(0.0001, start);
  for (let i = 0; i < 3; i++) {
    const t = start + i * 0.5;
    for (const [offset, frequency] of [[0, 880], [0.2, 1320]] as const) {
      const osc = context.createOscillator();
      osc.type = 'square';
      osc.frequency.setValueAtTime(frequency, t + offset);
      osc.connect(gain);
      osc.start(t + offset);
      osc.stop(t + offset + 0.18);
    }
    gain.gain.setValueAtTime(0.35, t);
    gain.gain.setValueAtTime(0.0001, t + 0.4);
  }
  return true;
}

/** A long-short-long buzz where the device has a vibration motor and allows it. */
export function vibrateAlarm() {
  if (typeof navigator === 'undefined' || typeof navigator.vibrate !== 'function') return false;
  try {
    return navigator.vibrate([500, 200, 500, 200, 900]);
  } catch {
    return false;
  }
}
