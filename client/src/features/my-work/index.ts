// What other features (and the app shell) may use from "My work"; everything else in this folder is its own business.
export { useMyWorkCounts, myWorkKey } from './api/get-my-work';
