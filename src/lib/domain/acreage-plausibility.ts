// When is an acreage on one practice record implausible enough to flag for review? These bounds are
// RUNNEL'S OWN RULE OF THUMB, not from a published source: they only raise a warning (the row is
// accepted) so a manager looks at likely typos — an extra zero, square feet sent as acres, a whole
// county typed as one field. Where a published figure informed a bound it is named beside it.
import { practiceByCode } from './practice-catalog';

export interface AcreageBounds {
	/** Below this the value is probably in the wrong unit. */
	low: number;
	/** Above this one record probably covers more than one site. */
	high: number;
	/** Why these bounds. */
	basis: string;
}

const OWN = "Runnel's own rule of thumb (no published source)";

/** Drainage-area bounds for edge-of-field practices, by practice code. */
const EDGE_OF_FIELD: Record<string, AcreageBounds> = {
	// Bioreactors are sized for systems of about 30–100 acres (Agricultural Drainage Management Coalition
	// practice page, as quoted in /work/shared/sources.md); 250 ac leaves room for large single outlets.
	'605': { low: 1, high: 250, basis: `${OWN}; typical systems 30–100 ac (Agricultural Drainage Management Coalition)` },
	'604': { low: 1, high: 250, basis: OWN },
	'554': { low: 1, high: 2000, basis: OWN },
	'587': { low: 1, high: 2000, basis: OWN },
	'410': { low: 1, high: 5000, basis: OWN },
	'638': { low: 0.5, high: 500, basis: OWN },
	'656': { low: 5, high: 20000, basis: OWN },
	'657': { low: 1, high: 20000, basis: OWN }
};

const IN_FIELD: AcreageBounds = { low: 0.1, high: 5000, basis: OWN };
const EDGE_DEFAULT: AcreageBounds = { low: 0.5, high: 5000, basis: OWN };

/** The bounds for the credited acreage of a practice, or null for an unknown practice code. */
export function acreageBounds(practiceCode: string): AcreageBounds | null {
	const p = practiceByCode(practiceCode);
	if (!p) return null;
	if (p.credited_basis === 'extent_acres') return IN_FIELD;
	return EDGE_OF_FIELD[p.code] ?? EDGE_DEFAULT;
}
