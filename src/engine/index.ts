/** The engine: compile a beamline into paths and run them (yields, rates, detector plane, scans). */
export { runLine, RunError, CancelledError, type RunOptions } from './run.ts';
export type * from './result.ts';
export { levelsListing, formatLevelsTable } from './levels.ts';
export { runDocumentText, type DocumentRun } from './document.ts';
export { runScan, withParameter, type ScanSpec, scan, scanPoint, scanBatches, scanParameters, scanIndices, scanResult, scanCsv, axisValues, leafName, csvNumber, MAX_SCAN_POINTS,
  type ScanAxis, type ScanResult, type ScanPoint, type ScanParameterResult, type ScanDetector, type ScanLeaf } from './scan.ts';
export { compile, evaluate, lineAt, parameter, parameterValue, type Plan, type CompileResult, type ParameterSlot } from './plan.ts';
export { engineCacheStats, clearEngineCaches, type CacheStats } from './session.ts';
export { countsIn, countSigma, signalToBackground, timeToPrecision } from './counting.ts';
export { budget, budgetOf, budgetSetup, budgetOutcomes, budgetResult, quantile, MAX_BUDGET_DRAWS, type BudgetSetup, type BudgetOutcome, type BudgetResult, type BudgetTolerance, type BudgetDetector, type Sensitivity, type BudgetOptions } from './budget.ts';
export { Random } from './random.ts';
export { fit, type FitResult, type FitOptions, type FreeParameter, type FittedParameter, type FitResidual } from './fit.ts';
export { fittedDocument, fittedQuantity } from './fitted.ts';
export { readMeasurements, MAX_READINGS, type Measurements, type Reading } from './measurements.ts';
export { simulate, MAX_ATOMS, type SimulationResult, type SimulatedDetector, type SimulateOptions, type HitMap } from './simulate.ts';
export { estimateRun, estimateLine, describeCost, costLimit, checkCost, formatSeconds, formatBytes, CostLimitError, ASK_SECONDS, REFUSE_SECONDS, REFUSE_BYTES, type CostEstimate } from './cost.ts';
