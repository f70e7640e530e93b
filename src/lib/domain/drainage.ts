// Peak flow of a subsurface drainage system from its drainage coefficient.
//
// A drainage coefficient (DC) is the depth of water the system removes in 24 hours. Over one acre,
// 1 in/day = 43,560 ft² × (1/12) ft ÷ 86,400 s = 0.042014 ft³/s, so Q (cfs) = DC (in/day) × A (ac) × 0.042014
// (= DC × A ÷ 23.80). USDA NRCS National Engineering Handbook Part 650 (Engineering Field Handbook),
// Chapter 14 "Water Management (Drainage)"; the factor itself is a unit conversion.

export const SQ_FT_PER_ACRE = 43_560;
export const SECONDS_PER_DAY = 86_400;
/** ft³/s carried by 1 in/day over 1 acre. */
export const CFS_PER_ACRE_INCH_PER_DAY = (SQ_FT_PER_ACRE * (1 / 12)) / SECONDS_PER_DAY;

/** Peak drainage flow, ft³/s, from drainage coefficient (in/day) and drained area (acres). */
export function peakDrainageFlowCfs(drainageCoefficientInPerDay: number, areaAcres: number): number {
	if (!(Number.isFinite(drainageCoefficientInPerDay) && drainageCoefficientInPerDay > 0)) {
		throw new RangeError(`A drainage coefficient is a positive number of inches per day, not ${drainageCoefficientInPerDay}`);
	}
	if (!(Number.isFinite(areaAcres) && areaAcres > 0))
		throw new RangeError(`A drained area is a positive number of acres, not ${areaAcres}`);
	return drainageCoefficientInPerDay * areaAcres * CFS_PER_ACRE_INCH_PER_DAY;
}
