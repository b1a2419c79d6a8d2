/**
 * Scopegrade level analysis engine: public interface. Framework-free and
 * browser-safe (no Node-only imports).
 */
export { LevelInputError } from './errors';
export { analyzeLevels, castHueCentres } from './analyze';
export type {
	AnalyzeOptions,
	CastDirection,
	CastSize,
	Finding,
	FindingSeverity,
	LevelReport,
	LevelWarning,
	NonMonotonicStep,
	NotGradedReason,
	Rgb,
	StepReport,
	TintReading,
	TintReport
} from './analyze';
export {
	bt1886,
	deltaE2000,
	rgbToXyzMatrix,
	xyzToLab,
	createDisplayModel,
	SMPTE_C_PRIMARIES,
	BT709_PRIMARIES,
	D65_XY,
	BT1886_DEFAULTS
} from './colour';
export type { Bt1886Options, Primaries, Chromaticity, Vec3, Mat3, DisplayModel } from './colour';
export { RUBRIC, RUBRIC_VERSION, BANDS, decideBand, bandRank } from './rubric';
export type { Band, FailReason, BandInputs } from './rubric';
export {
	validateLevelInput,
	ALL_STEPS_IRE,
	REQUIRED_STEPS_IRE,
	CHANNELS,
	DEFAULT_FULL_SCALE_MV,
	MAX_READING_MV,
	MIN_READING_MV,
	readingsLookLikeVolts
} from './validate';
export type { Channel, LevelInput, LevelStepInput } from './validate';
export { whatIf, bestFit, transformSignalIre, unclippedSignalIre, interpolateCurve } from './whatif';
export type { LevelTransform, WhatIfResult, WhatIfClipping, BestFitResult, ChannelFit } from './whatif';
export { aggregateRuns, medianBand } from './aggregate';
export type { AggregateResult } from './aggregate';
export { importTrace, traceToLevelInput, runningMedian, TRACE_WARNING_WORDS } from './trace';
export type { ImportTraceOptions, TraceImport, TracePlateau, TraceChannel, TraceWarning, VoltageUnit } from './trace';
export {
	SIGMA_PT_IRE,
	Z_LIMITS,
	TESTER_RULES,
	algorithmA,
	assessTester,
	fitLine,
	interpretZ,
	median,
	revisionConsensus,
	sameToThreeFigures,
	testerKey,
	testerReport,
	zScore
} from './proficiency';
export type {
	AlgorithmAResult,
	AlgorithmAStep,
	ConsensusCell,
	LineFit,
	RevisionConsensus,
	RunLevels,
	RunZ,
	TesterAssessment,
	TesterInputRevision,
	TesterPoint,
	TesterReport,
	TesterStatus,
	ZSignal
} from './proficiency';
export { expectedGrade, backtestExpected } from './expected';
export type { ChipRun, ExpectedGrade, BacktestRevision, BacktestResult } from './expected';
