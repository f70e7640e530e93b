// The home page: a short introduction for visitors, and each role's own home once signed in.
import { adminHome, districtsOverview, liveTokenCount } from '$lib/server/accounts/home';
import { getDb } from '$lib/server/db';
import { openReviewCount, pendingReturns } from '$lib/server/reviews/queue';
import { overdueVisitCounts } from '$lib/server/verification/visits';
import type { PageServerLoad } from './$types';

export const load = (async ({ locals }) => {
	const p = locals.principal;
	if (!p) return { home: null };
	const db = getDb();
	const tokens = await liveTokenCount(db, p.userId);
	switch (p.role) {
		case 'admin':
			return { home: { role: 'admin' as const, tokens, admin: await adminHome(db) } };
		case 'manager':
			return {
				home: {
					role: 'manager' as const,
					tokens,
					districts: await districtsOverview(db, p),
					// Work waiting: records flagged for review, and field visits past their due date (per draw).
					reviewsOpen: await openReviewCount(db, null),
					visitsOverdue: await overdueVisitCounts(db, null)
				}
			};
		case 'district':
			return {
				home: {
					role: 'district' as const,
					tokens,
					district: (await districtsOverview(db, p))[0] ?? null,
					// Records the state program returned, until a new version of each arrives.
					returned: p.districtId === null ? [] : await pendingReturns(db, p.districtId)
				}
			};
		case 'researcher':
			return { home: { role: 'researcher' as const, tokens, scopes: p.scopes } };
	}
}) satisfies PageServerLoad;
