/** Recheck states of a revision, in the order a review moves through them. */
export const RECHECK_STATES = ['draft', 'awaiting-recheck', 'confirmed', 'disputed'] as const;
export type RecheckState = (typeof RECHECK_STATES)[number];
