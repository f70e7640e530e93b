import { isAuditAction } from '$lib/domain/audit-actions';
import { listAudit } from '$lib/server/accounts/audit';
import { getDb } from '$lib/server/db';
import type { PageServerLoad } from './$types';

const PAGE = 50;

export const load = (async ({ url }) => {
	const db = getDb();
	const userParam = url.searchParams.get('user') ?? '';
	const actionParam = url.searchParams.get('action') ?? '';
	const beforeParam = url.searchParams.get('before') ?? '';
	const userId = /^\d{1,9}$/.test(userParam) ? Number(userParam) : undefined;
	const action = isAuditAction(actionParam) ? actionParam : undefined;
	const before = /^\d{1,18}$/.test(beforeParam) ? beforeParam : undefined;
	const [{ rows, nextBefore }, users] = await Promise.all([
		listAudit(db, { userId, action, before, limit: PAGE }),
		db.selectFrom('users').select(['id', 'name', 'email']).orderBy('name').execute()
	]);
	return { rows, nextBefore, users, filter: { user: userId ? String(userId) : '', action: action ?? '' }, paged: before !== undefined };
}) satisfies PageServerLoad;
