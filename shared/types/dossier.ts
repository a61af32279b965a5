import type { Moment } from './moment';

/** A dossier build: running (with its progress), done (the PDF may be downloaded) or failed. */
export type DossierJobState = 'running' | 'done' | 'failed';

export interface DossierJob<T extends Moment = string> {
  id: string;
  permitId: string;
  state: DossierJobState;
  /** 0 to 100. */
  progress: number;
  /** What the build is doing now, in plain words. */
  stage: string;
  startedAt: T;
  finishedAt: T | null;
  sizeBytes: number | null;
  /** Where the PDF is downloaded from, once done. */
  downloadUrl: string | null;
  /** Why the build failed, in plain words. */
  error: string | null;
}
