import { useEffect, type ReactNode } from 'react';
import { QueryClientProvider } from '@tanstack/react-query';
import { keepCacheToOnePerson, queryClient } from '@client/lib/query-client';
import { setUnauthenticatedHandler } from '@client/lib/api-client';
import { ToastProvider } from '@client/components/ui/toast';
import { getMeQueryOptions } from '@client/features/auth/api/get-me';

// The outbox's sender loads after the first screen, not with the sign-in page.
const sendWaiting = () => void import('@client/lib/outbox/outbox-sender').then((m) => m.sendWaiting());

export function AppProviders({ children }: { children: ReactNode }) {
  useEffect(() => {
    setUnauthenticatedHandler(() => queryClient.setQueryData(getMeQueryOptions().queryKey, null));
    const stopScoping = keepCacheToOnePerson(queryClient);
    // Whenever the signed-in person is known (at start, after signing in), send what waits in their outbox.
    const stopSending = queryClient.getQueryCache().subscribe((event) => {
      const key = event.query.queryKey;
      if (key[0] === 'auth' && key[1] === 'me' && event.type === 'updated' && event.action.type === 'success' && event.query.state.data) sendWaiting();
    });
    let stopPersisting: (() => void) | null = null;
    let stopped = false;
    void import('@client/lib/query-persistence')
      .then((m) => m.startPersistence(queryClient))
      .then((stop) => {
        if (stopped) stop();
        else stopPersisting = stop;
        sendWaiting();
      });
    return () => {
      stopped = true;
      stopScoping();
      stopSending();
      stopPersisting?.();
    };
  }, []);
  return (
    <QueryClientProvider client={queryClient}>
      <ToastProvider>{children}</ToastProvider>
    </QueryClientProvider>
  );
}
