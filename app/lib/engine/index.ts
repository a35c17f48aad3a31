export type { EngineError, EngineErrorCode, Result } from "./result";
export * from "./map-document";
export { validateMap, type IssueCode, type ValidationIssue, type ValidationReport } from "./validate";
export { powerUpSequence, STAGE_RANK, compareStages, type PowerUpSequence } from "./sequence";
export {
  parseQuantity,
  parseRange,
  formatQuantity,
  unitForMode,
  MAX_READING_TEXT,
  type Quantity,
  type Unit,
} from "./units";
export { checkPreferred, E6, E12, E24, E96, type PreferredCheck, type Series } from "./preferred-values";
export {
  judge,
  meterUncertainty,
  windowOf,
  MeterProfileSchema,
  DEFAULT_MISSING_V,
  DEFAULT_SHORTED_OHM,
  type Judgement,
  type MeterProfile,
  type MeterRange,
  type Verdict,
} from "./judge";
export {
  compileMap,
  compileMapCached,
  clearCompileCache,
  COMPILE_CACHE_SIZE,
  type CompiledMap,
} from "./model";
export {
  analyse,
  startRun,
  judgeReading,
  ReadingSchema,
  RunSetupSchema,
  MAX_READINGS,
  MAX_CONTRADICTIONS,
  type Analysis,
  type AnalyseOptions,
  type Contradiction,
  type Finding,
  type JudgedReading,
  type Reading,
  type Run,
  type RunSetup,
  type Suspect,
} from "./infer";
export { nextReading, DISASSEMBLY_SECONDS, type NextStep } from "./next-reading";
export type { CostModel, Priors } from "./run-state";
export {
  orderRepairs,
  expectedCostOfRepair,
  expectedCostObserveFirst,
  type RepairAction,
} from "./repair-order";
export { failureRate, rankByFailureRate, Z_95, type FailureRate } from "./stats";
