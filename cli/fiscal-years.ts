// `--fy 2027` or `--fy 2020..2027`: a fiscal year or an inclusive range (named for the year it ends).
import { InvalidArgumentError } from 'commander';

export interface FyRange {
	from: number;
	to: number;
}

export const FY_MIN = 1950;
export const FY_MAX = 2100;

export function parseFyRange(value: string): FyRange {
	const m = /^(\d{4})(?:\.\.(\d{4}))?$/.exec(value.trim());
	if (!m) throw new InvalidArgumentError('give a fiscal year (2027) or a range (2020..2027).');
	const from = Number(m[1]);
	const to = Number(m[2] ?? m[1]);
	if (from < FY_MIN || to > FY_MAX) throw new InvalidArgumentError(`fiscal years run from ${FY_MIN} to ${FY_MAX}.`);
	if (from > to) throw new InvalidArgumentError(`the range starts after it ends (${from} > ${to}).`);
	return { from, to };
}

export const fyParam = (r: FyRange) => (r.from === r.to ? String(r.from) : `${r.from}..${r.to}`);
