import type { QueryFunction } from '@tanstack/react-query';
import type { MeResponse } from '@shared/types/auth';
import type { MyWork } from '@shared/types/my-work';
import { queryClient } from '@client/lib/query-client';
import { api } from '@client/lib/api-client';
import { getMeQueryOptions } from '@client/features/auth/api/get-me';
import { myWorkKey } from '@client/features/my-work';

// Every screen starts from who is signed in, and the signed-in shell counts what waits for them ("My work").
// index.html asks for both in its head (`<link rel="preload" as="fetch">`), so on a slow link the answers do
// not wait for the scripts. The browser hands a preloaded answer only to the same plain request (no headers of
// our own, the page's cookies), made here; anything but a success then goes the usual way through the API
// client (a second request), which turns it into the usual answer or error.
const plainFirst =
  <T>(path: string, usual: QueryFunction<T>): QueryFunction<T> =>
  async (context) => {
    const res = await fetch(path, { credentials: 'same-origin' }).catch(() => null);
    return res?.ok ? ((await res.json()) as T) : usual(context);
  };

const me = getMeQueryOptions();
void queryClient.prefetchQuery({ ...me, queryFn: plainFirst('/api/auth/me', me.queryFn as QueryFunction<MeResponse | null>) });
void queryClient.prefetchQuery({ queryKey: myWorkKey, queryFn: plainFirst('/api/my-work', () => api.get<MyWork>('/api/my-work')) });
