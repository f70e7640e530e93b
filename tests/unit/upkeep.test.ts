// The bioreactor upkeep-overdue rule (src/lib/domain/upkeep.ts). The 2-year default is Runnel's own
// choice (common practice, no published source); the lifespan comes from the practice catalog.
import { describe, expect, it } from 'vitest';
import { DEFAULT_UPKEEP_OVERDUE_YEARS, isUpkeepOverdue, upkeepDueBy, upkeepYearsOf } from '../../src/lib/domain/upkeep';

const LIFESPAN = 15;
const bio = (installed_on: string, last_upkeep_on: string | null, extra: { status?: string; withdrawn_on?: string | null } = {}) => ({
	installed_on,
	last_upkeep_on,
	status: 'installed',
	withdrawn_on: null,
	...extra
});

describe('upkeep overdue rule', () => {
	it('counts from the install date when no upkeep is recorded: due on the anniversary, overdue the day after', () => {
		const b = bio('2022-05-10', null);
		expect(upkeepDueBy(b, 2)).toBe('2024-05-10');
		expect(isUpkeepOverdue(b, '2024-05-10', 2, LIFESPAN)).toBe(false);
		expect(isUpkeepOverdue(b, '2024-05-11', 2, LIFESPAN)).toBe(true);
	});

	it('restarts the clock at the last media top-up or inspection', () => {
		const b = bio('2018-05-10', '2025-04-01');
		expect(upkeepDueBy(b, 2)).toBe('2027-04-01');
		expect(isUpkeepOverdue(b, '2026-12-01', 2, LIFESPAN)).toBe(false);
		expect(isUpkeepOverdue(bio('2018-05-10', '2024-11-30'), '2026-12-01', 2, LIFESPAN)).toBe(true);
	});

	it('follows the configured interval', () => {
		const b = bio('2018-05-10', '2023-06-01');
		expect(isUpkeepOverdue(b, '2026-12-01', 2, LIFESPAN)).toBe(true);
		expect(isUpkeepOverdue(b, '2026-12-01', 4, LIFESPAN)).toBe(false);
	});

	it('ignores an upkeep date before install (the install date counts)', () => {
		expect(upkeepDueBy(bio('2022-05-10', '2021-01-01'), 2)).toBe('2024-05-10');
	});

	it('never flags a withdrawn bioreactor or one past its lifespan', () => {
		expect(isUpkeepOverdue(bio('2018-05-10', null, { status: 'withdrawn', withdrawn_on: '2020-01-01' }), '2026-12-01', 2, LIFESPAN)).toBe(
			false
		);
		expect(isUpkeepOverdue(bio('2005-05-10', null), '2026-12-01', 2, LIFESPAN)).toBe(false);
		expect(isUpkeepOverdue(bio('2012-05-10', null), '2026-12-01', 2, LIFESPAN)).toBe(true);
	});

	it('handles 29 February like the fiscal-year date arithmetic (to 1 March in a common year)', () => {
		expect(upkeepDueBy(bio('2020-01-01', '2024-02-29'), 2)).toBe('2026-03-01');
	});

	it('reads the setting, falling back to the default of 2 for missing or silly values', () => {
		expect(DEFAULT_UPKEEP_OVERDUE_YEARS).toBe(2);
		expect(upkeepYearsOf(3)).toBe(3);
		expect(upkeepYearsOf('4')).toBe(4);
		for (const bad of [null, undefined, 0, -1, 1.5, 'two', 99, '']) expect(upkeepYearsOf(bad)).toBe(2);
		expect(() => upkeepDueBy(bio('2020-01-01', null), 0)).toThrow(RangeError);
	});
});
