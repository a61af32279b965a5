// What other features may use from gas tests; everything else in this folder is its own business.
export { GasTestsSection } from './components/gas-tests-section';
export { ChecksSection } from './components/checks-section';
export { HandoverSection } from './components/handover-section';
export { CheckTask, DueNext, GasTestTask, useGasTaskOffers } from './components/task-screens';
