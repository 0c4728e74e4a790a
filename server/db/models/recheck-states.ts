/** Recheck states of a revision, in the order a review moves through them (the API contract owns the list). */
export { RECHECK_STATES, type RecheckState } from '../../../shared/api/common';
