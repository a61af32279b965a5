import { describe, expect, it } from 'vitest';
import { RestartBackoff } from '../../server/src/lib/restart-backoff';

/** Starts and ends a process `stayedUpMs` later; answers the wait before the next start. */
function crash(backoff: RestartBackoff, at: { now: number }, stayedUpMs: number) {
  backoff.started(at.now);
  at.now += stayedUpMs;
  const delay = backoff.ended(at.now);
  at.now += delay;
  return delay;
}

describe('finding H1: restarting a server process that ended', () => {
  it('finding H1: when a process keeps failing at start, then each restart waits twice as long as the one before, from 0.5 s up to 30 s', () => {
    const backoff = new RestartBackoff();
    const at = { now: 0 };
    const delays = Array.from({ length: 10 }, () => crash(backoff, at, 200));
    expect(delays).toEqual([500, 1_000, 2_000, 4_000, 8_000, 16_000, 30_000, 30_000, 30_000, 30_000]);
  });

  it('finding H1: when a process stayed up for a minute before it ended, then the next restart waits 0.5 s again', () => {
    const backoff = new RestartBackoff();
    const at = { now: 0 };
    for (let i = 0; i < 6; i++) crash(backoff, at, 100);
    expect(crash(backoff, at, 59_000)).toBe(30_000);
    expect(crash(backoff, at, 60_000)).toBe(500);
    expect(crash(backoff, at, 100)).toBe(1_000);
  });
});
