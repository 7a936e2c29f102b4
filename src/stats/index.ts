export * from './detection.js';
export * from './sampleSize.js';
export * from './site.js';
export * from './freedom.js';
export * from './prevalence.js';
export * from './betaQuantile.js';
export {
  balancedLogFactorialSum,
  logHypergeometricPmf,
  logHypergeometricZero,
  logGamma,
  logBeta,
  stirlingError,
} from './special.js';
export * from './twoStage.js';
export * from './pooled.js';
export * from './hypergeometricDraw.js';
