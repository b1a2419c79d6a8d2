/** Words for a bench run's tester check (ISO 13528 section 9 signals) and its review state. */
export type ZSignal = 'satisfactory' | 'questionable' | 'action';
export type CheckState = 'open' | 'kept' | 'superseded' | 'remeasure';

export const SIGNAL_WORDS: Record<ZSignal, string> = {
	satisfactory: 'Agrees with the others (|z| ≤ 2)',
	questionable: 'Questionable (2 < |z| < 3)',
	action: 'Action signal (|z| ≥ 3)'
};

export const STATE_WORDS: Record<CheckState, string> = {
	open: 'Waiting for a curator',
	kept: 'Kept by a curator',
	superseded: 'Superseded: no longer counts',
	remeasure: 'Please measure this unit again'
};
