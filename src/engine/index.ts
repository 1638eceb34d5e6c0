/** The engine: compile a beamline into paths and run them (yields, rates, detector plane, scans). */
export { runLine, RunError, CancelledError, type RunOptions } from './run.ts';
export type * from './result.ts';
export { levelsListing, formatLevelsTable } from './levels.ts';
export { runDocumentText, type DocumentRun } from './document.ts';
export { runScan, withParameter, type ScanSpec } from './scan.ts';
export { countsIn, countSigma, signalToBackground, timeToPrecision } from './counting.ts';
