// Full-pipe capacity of a drain by Manning's equation, US customary units (standard open-channel
// hydraulics): Q = (1.486 / n) · A · R^(2/3) · S^(1/2), with A = πd²/4 and R = d/4 for a full circular pipe
// (Q in ft³/s, d in ft, S in ft/ft). 1.486 is the cube root of 3.2808 (feet per metre), which turns the SI
// form (k = 1) into feet.
//
// Roughness of corrugated plastic drain tubing by size — RECALLED FROM MEMORY (drainage design guides),
// not confirmed against a stored copy: n = 0.015 for 3–8 in, 0.017 for 10–12 in, 0.020 above 12 in.
// Sizes between the bands take the next band up (e.g. 9 in → 0.017); sizes below 3 in take 0.015.

export const MANNING_US_FACTOR = 1.486;

export interface Roughness {
	n: number;
	basis: string;
	recalled: boolean;
}

export function corrugatedTubingRoughness(diameterIn: number): Roughness {
	if (!(Number.isFinite(diameterIn) && diameterIn > 0))
		throw new RangeError(`A pipe diameter is a positive number of inches, not ${diameterIn}`);
	const basis = 'Corrugated plastic drain tubing: 0.015 for 3–8 in, 0.017 for 10–12 in, 0.020 above 12 in (recalled from memory)';
	if (diameterIn <= 8) return { n: 0.015, basis, recalled: true };
	if (diameterIn <= 12) return { n: 0.017, basis, recalled: true };
	return { n: 0.02, basis, recalled: true };
}

/** Full-pipe capacity, ft³/s. `slope` in ft/ft (0.001 = 0.1 %). */
export function manningFullPipeCfs(diameterIn: number, slope: number, n: number): number {
	if (!(Number.isFinite(diameterIn) && diameterIn > 0))
		throw new RangeError(`A pipe diameter is a positive number of inches, not ${diameterIn}`);
	if (!(Number.isFinite(slope) && slope > 0)) throw new RangeError(`A pipe slope is a positive fraction (ft/ft), not ${slope}`);
	if (!(Number.isFinite(n) && n > 0)) throw new RangeError(`Manning's n is positive, not ${n}`);
	const d = diameterIn / 12;
	const area = (Math.PI * d * d) / 4;
	const r = d / 4;
	return (MANNING_US_FACTOR / n) * area * Math.pow(r, 2 / 3) * Math.sqrt(slope);
}
