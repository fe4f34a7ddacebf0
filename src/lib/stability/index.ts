// Loopwarden's stability engine (exact decisions; not a qualified tool). Pure TypeScript: no I/O, runs in the browser and on the server.
export { ENGINE_VERSION } from './version';
export {
	modelSchema,
	checkSchema,
	caseSchema,
	parseModel,
	parseCheck,
	parseCase,
	parseEngineCheck,
	engineCheckSchema,
	matrixCircleCheckSchema,
	isDiscrete,
	ModelInputError,
	INFINITE_BOUND_SPELLINGS,
	strictIn,
	type Model,
	type Check,
	type Case,
	type EngineCheck,
	type MatrixCircleCheck,
	type InputIssue
} from './schema';
export type { CheckResult, Verdict, PositiveRealClass, NumberOrInf } from './types';
export { toTransferFunction, poles, zeros, dcGain, relativeDegree } from './model';
export { runCheck, runCheckOnPoints, analyzeCase } from './run';
export {
	nyquistCurve,
	sectorGeometry,
	regionMargin,
	regionWords,
	popovCurve,
	reZCurve,
	frequencyResponse,
	type CurvePoint
} from './present';
