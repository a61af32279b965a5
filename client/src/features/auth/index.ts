// What other features may use from auth; everything else in this folder is its own business.
export { useMe } from './api/get-me';
