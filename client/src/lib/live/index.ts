export { AlarmProvider } from './alarm-provider';
export { useWatchPermit, useWatchPermits } from './use-watch-permits';
export { permitIdsIn } from './permit-ids';
export type { LiveStatus } from './live-connection';
