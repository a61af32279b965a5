// The report page stands on its own; other features need nothing from it yet.
export { getReportsOverviewQueryOptions } from './api/get-reports-overview';
