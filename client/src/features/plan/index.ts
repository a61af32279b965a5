// The week ahead is a page of its own; other features need nothing from it yet.
export { getPlanQueryOptions } from './api/get-plan';
