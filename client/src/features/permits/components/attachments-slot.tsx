import type { ReactNode } from 'react';
import { Card } from '@client/components/ui/page';

/**
 * Where the permit's attachments go. The uploads feature passes its list/upload component as
 * `children`; until then the section says so.
 */
export function AttachmentsSlot({ children }: { permitId: string; children?: ReactNode }) {
  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Attachments</h2>
      {children ?? <p className="text-sm text-ink-soft">Photos and documents for this permit will be listed here.</p>}
    </Card>
  );
}
