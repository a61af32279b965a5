// What other features may use from isolations; everything else in this folder is its own business.
export { IsolationPlanSection } from './components/isolation-plan-section';
export { StepTaskForm, stepTaskActions, stepTaskLabels, useIsolationStep, useStepTasks, type StepTaskAction } from './components/step-tasks';
