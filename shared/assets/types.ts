/** What the asset API answers; the client reads these types, the server builds them. */
import type { PipeSchedule } from '../calc/pipe-table';
import type { InventoryState, IsolationPointKind, LocationUnit, NormalPosition, ProductKind, ValveType } from '../schemas/assets.schema';
import type { InsideDiameterSource } from './inside-diameter';
import type { PipelineSegment } from './segments';

export interface PipelineSummary {
  id: string;
  code: string;
  name: string;
  product: ProductKind;
  nps: number;
  schedule: PipeSchedule | null;
  insideDiameterIn: number;
  mopPsig: number;
  startPosition: number;
  endPosition: number;
  unit: LocationUnit;
  pointCount: number;
  valveCount: number;
}

export interface PipelineSite {
  id: string;
  name: string;
  position: number;
}

export interface IsolationPoint {
  id: string;
  pipelineId: string;
  pipelineCode: string;
  pipelineName: string;
  tagCode: string;
  kind: IsolationPointKind;
  position: number;
  unit: LocationUnit;
  description: string | null;
  valveType: ValveType | null;
  normalPosition: NormalPosition | null;
  remotelyOperable: boolean | null;
  updatedAt: string;
}

export interface PipelineDetail extends PipelineSummary {
  wallThicknessIn: number | null;
  insideDiameterSource: InsideDiameterSource;
  outsideDiameterIn: number | null;
  notes: string | null;
  sites: PipelineSite[];
  points: IsolationPoint[];
  segments: PipelineSegment[];
  createdAt: string;
  updatedAt: string;
}

export interface InventoryItem {
  id: string;
  number: string;
  state: InventoryState;
  holderUserId: string | null;
  holderName: string | null;
  notes: string | null;
  updatedAt: string;
}

export interface ImportIssue {
  /** Spreadsheet row (the header is row 1); 0 when the problem is with the file as a whole. */
  row: number;
  /** The CSV column at fault, or null when the whole row (or file) is. */
  column: string | null;
  message: string;
}

export interface ImportCounts {
  create: number;
  update: number;
}

export interface ImportReport {
  valid: boolean;
  /** True only when the rows were written. */
  applied: boolean;
  rows: number;
  pipelines: ImportCounts;
  sites: ImportCounts;
  points: ImportCounts;
  errors: ImportIssue[];
}
