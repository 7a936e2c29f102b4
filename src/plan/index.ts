export * from './placement.js';
export * from './sizing.js';
export * from './followUp.js';
export * from './schedule.js';
export * from './frequency.js';
export * from './sampleId.js';
export * from './roundPlan.js';
export * from './monitoring.js';
export type { BarnPlanNote } from './barnNotes.js';
