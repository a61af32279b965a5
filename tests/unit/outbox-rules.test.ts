import { describe, expect, it } from 'vitest';
import { QueryClient } from '@tanstack/react-query';
import { afterFailure, backoffMs, BACKOFF_MAX_MS, classifyFailure, nextToSend, sizeText, waitingText, type OutboxRecord } from '@client/lib/outbox/outbox-rules';
import { isKeptOnDevice, keepCacheToOnePerson } from '@client/lib/query-client';

const record = (seq: number, over: Partial<OutboxRecord> = {}): OutboxRecord => ({
  seq,
  key: `key-${seq}`,
  userId: 'u1',
  tenantId: 't1',
  kind: 'gas_test',
  title: `Gas test ${seq}`,
  permitId: 'p1',
  path: '/api/permits/p1/gas-tests',
  body: { testedAt: '2026-12-03T14:02:00Z' },
  observedAt: '2026-12-03T14:02:00Z',
  queuedAt: '2026-12-03T14:02:05Z',
  state: 'waiting',
  attempts: 0,
  nextAttemptAt: 0,
  invalidate: [],
  ...over,
});

describe('outbox order (issue 18, working without signal)', () => {
  it('when records wait, then the oldest is sent first, whatever order they are listed in', () => {
    expect(nextToSend([record(3), record(1), record(2)], 1_000)?.record.seq).toBe(1);
  });

  it('when the oldest record waits out its back-off, then nothing later overtakes it', () => {
    const next = nextToSend([record(1, { nextAttemptAt: 5_000, attempts: 1 }), record(2)], 1_000);
    expect(next?.record.seq).toBe(1);
    expect(next?.waitMs).toBe(4_000);
  });

  it('when the oldest record was refused, then it waits for a person and the next one is sent', () => {
    expect(nextToSend([record(1, { state: 'refused' }), record(2)], 1_000)?.record.seq).toBe(2);
    expect(nextToSend([record(1, { state: 'refused' })], 1_000)).toBeNull();
  });
});

describe('outbox back-off and refusals (issue 18)', () => {
  it('when tries keep failing, then the wait doubles from 2 s and stops growing at 5 min', () => {
    expect([1, 2, 3, 4].map(backoffMs)).toEqual([2_000, 4_000, 8_000, 16_000]);
    expect(backoffMs(30)).toBe(BACKOFF_MAX_MS);
  });

  it('when no answer comes or the server fails, then the record stays queued for a retry later', () => {
    expect(classifyFailure({ status: 0, message: 'No connection' })).toMatchObject({ kind: 'retry', offline: true });
    for (const status of [500, 502, 503, 408, 429]) expect(classifyFailure({ status, message: 'x' }).kind).toBe('retry');
    expect(classifyFailure({ status: 409, message: 'The first request with this Idempotency-Key is still being processed. Try again in a moment.' }).kind).toBe('retry');
  });

  it('when the server refuses the record, then it is kept with the server’s own words', () => {
    const failure = classifyFailure({ status: 409, message: 'This step cannot be applied while the permit is suspended.', details: [{ path: 'state', message: 'Suspended.' }] });
    expect(failure).toEqual({ kind: 'refused', refusal: { status: 409, message: 'This step cannot be applied while the permit is suspended.', details: [{ path: 'state', message: 'Suspended.' }] } });
    expect(classifyFailure({ status: 422, message: 'Too late.' }).kind).toBe('refused');
  });

  it('when the session has ended, then the record keeps waiting for a sign-in instead of being refused', () => {
    expect(classifyFailure({ status: 401, message: 'Sign in.' }).kind).toBe('signed_out');
  });

  it('when a try fails, then the observed time, the body and the Idempotency-Key are never changed', () => {
    const r = record(1);
    const retried = afterFailure(r, classifyFailure({ status: 503, message: 'x' }), 10_000);
    expect(retried).toMatchObject({ attempts: 1, nextAttemptAt: 12_000, observedAt: r.observedAt, body: r.body, key: r.key, state: 'waiting' });
    const refused = afterFailure(retried, classifyFailure({ status: 422, message: 'No.' }), 20_000);
    expect(refused).toMatchObject({ state: 'refused', observedAt: r.observedAt, key: r.key, lastProblem: 'No.' });
  });

  it('when records wait, then the badge says how many in plain words, and photo sizes are readable', () => {
    expect(waitingText(1)).toBe('1 record waiting to send');
    expect(waitingText(3)).toBe('3 records waiting to send');
    expect(sizeText(2_400_000)).toBe('2.4 MB');
    expect(sizeText(310_000)).toBe('310 kB');
  });
});

describe('data kept on the device (issue 18)', () => {
  const me = (id: string) => ({ user: { id, email: `${id}@x`, name: id }, memberships: [], activeTenantId: 't1', activeTenant: null, rules: [] });

  it('when a permit or the signed-in person was read, then it is kept; an admin list or a failed read is not', () => {
    const ok = { status: 'success' } as const;
    expect(isKeptOnDevice({ queryKey: ['permits', 'detail', 'p1'], meta: undefined, state: ok } as never)).toBe(true);
    expect(isKeptOnDevice({ queryKey: ['auth', 'me'], meta: undefined, state: ok } as never)).toBe(true);
    expect(isKeptOnDevice({ queryKey: ['admin', 'users'], meta: undefined, state: ok } as never)).toBe(false);
    expect(isKeptOnDevice({ queryKey: ['admin', 'users'], meta: { persist: true }, state: ok } as never)).toBe(true);
    expect(isKeptOnDevice({ queryKey: ['permits', 'detail', 'p1'], meta: undefined, state: { status: 'error' } } as never)).toBe(false);
  });

  it('when another person signs in on the same device, or the person signs out, then the previous person’s data is dropped', () => {
    const qc = new QueryClient();
    const stop = keepCacheToOnePerson(qc);
    qc.setQueryData(['auth', 'me'], me('alice'));
    qc.setQueryData(['permits', 'detail', 'p1'], { number: 'P-1' });
    qc.setQueryData(['auth', 'me'], me('alice'));
    expect(qc.getQueryData(['permits', 'detail', 'p1'])).toBeDefined();
    qc.setQueryData(['auth', 'me'], me('bob'));
    expect(qc.getQueryData(['permits', 'detail', 'p1'])).toBeUndefined();
    qc.setQueryData(['permits', 'detail', 'p2'], { number: 'P-2' });
    qc.setQueryData(['auth', 'me'], null);
    expect(qc.getQueryData(['permits', 'detail', 'p2'])).toBeUndefined();
    stop();
  });
});
