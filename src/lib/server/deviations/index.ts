export { raiseDeviation, type RaiseDeviationInput, type RaisedDeviation } from './raise';
export { raiseManualDeviation, type ManualRaiseInput } from './manual';
export { transitionDeviation, updateDeviation, type TransitionInput, type TransitionResult, type DeviationFields } from './workflow';
export {
	openDeviationsOf,
	finishedDeviationStatuses,
	listDeviations,
	listDeviationKinds,
	getDeviation,
	type OpenDeviation,
	type DeviationFilters,
	type DeviationListItem,
	type DeviationDetail
} from './queries';
export { DeviationError, isDeviationError, type DeviationErrorCode } from './errors';
