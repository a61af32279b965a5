// What other features may use from permits; everything else in this folder is its own business.
export { usePermitPipelines } from './api/get-pipelines';
export { usePermitPipeline } from './api/get-pipeline';
export { PermitStateBadge } from './components/permit-state-badge';
export { useNow } from './hooks/use-now';
export { describeGasDue, formatSpan } from './lib/time-left';
export { schematicOverlays } from './lib/schematic-overlays';
