export { raiseDeviation, type RaiseDeviationInput, type RaisedDeviation } from './raise';
