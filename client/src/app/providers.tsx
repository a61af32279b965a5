import { useEffect, type ReactNode } from 'react';
import { QueryClientProvider } from '@tanstack/react-query';
import { queryClient } from '@client/lib/query-client';
import { setUnauthenticatedHandler } from '@client/lib/api-client';
import { ToastProvider } from '@client/components/ui/toast';
import { getMeQueryOptions } from '@client/features/auth/api/get-me';

export function AppProviders({ children }: { children: ReactNode }) {
  useEffect(() => {
    setUnauthenticatedHandler(() => queryClient.setQueryData(getMeQueryOptions().queryKey, null));
  }, []);
  return (
    <QueryClientProvider client={queryClient}>
      <ToastProvider>{children}</ToastProvider>
    </QueryClientProvider>
  );
}
