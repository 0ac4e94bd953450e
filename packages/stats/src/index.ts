export { StatsInputError } from './errors.js';
