import type { UseQueryResult } from '@tanstack/react-query';
import type { PermitDetail } from '@shared/types/permits';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { Loading } from '@client/components/ui/page';
import { Notice } from '@client/components/ui/notice';
import { PermitNotFound } from './permit-not-found';

/** What a permit's screens show until it has loaded: the wait, "not found" (missing, or not this person's), or the error with a retry. */
export function PermitLoading({ permit }: { permit: UseQueryResult<PermitDetail> }) {
  if (permit.isPending) return <Loading label="Loading the permit…" />;
  const error = permit.error;
  if (error instanceof ApiError && (error.status === 404 || (error.status === 400 && error.code === 'validation_failed'))) return <PermitNotFound />;
  return (
    <Notice tone="danger" role="alert" title="The permit could not be loaded.">
      <p>{error?.message}</p>
      <Button variant="secondary" onClick={() => void permit.refetch()}>
        Try again
      </Button>
    </Notice>
  );
}
