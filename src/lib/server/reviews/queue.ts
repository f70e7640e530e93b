// The review queue: records whose current version carries warnings, and the managers' decisions on them.
//
// - `refreshReviewQueue(trx, ids)` runs in every write transaction that changes records (through
//   `afterRecordsChanged`): a new version ends a pending return and sets the queue status by the rule in
//   $lib/domain/review-state.ts (re-opened only for warnings no `verified` decision accepted).
// - `listReviews` answers the queue (filters, cursor pages; a district principal sees its own only).
// - `decideReview` stores a manager's decision with who and when, writes the audit log and, for a
//   return, mails the district's users.
import { sql, type Kysely, type Transaction } from 'kysely';
import { z } from 'zod';
import { statusAfterNewVersion, type QueueStatus } from '$lib/domain/review-state';
import type { ReviewDecisionInput, ReviewDecisionView, ReviewItem } from '$lib/schema/reviews';
import { recordAudit } from '../accounts/audit';
import type { Principal } from '../auth/principal';
import { actorOf } from '../auth/principal';
import { config } from '../config';
import { getDb } from '../db';
import type { Database, ReviewStatus } from '../db/schema';
import { decodeCursor, toPage, type Page } from '../http/cursor';
import { ApiError } from '../http/problem';
import { queueMail } from '../mail/queue';
import { composeMail } from '../mail/template';
import { readableDistrictId } from '../records/access';

type Db = Kysely<Database> | Transaction<Database>;

// --- the change hook ---------------------------------------------------------------------------------

export async function refreshReviewQueue(trx: Transaction<Database>, recordIds: readonly string[]): Promise<void> {
	const ids = [...new Set(recordIds.map(String))];
	if (ids.length === 0) return;
	const { rows } = await sql<{
		id: string;
		district_id: number;
		version: number;
		q_status: ReviewStatus | null;
		q_version: number | null;
		keys: string[];
		accepted: string[];
	}>`
		select r.id::text as id, r.district_id, r.version, q.status as q_status, q.version as q_version,
			coalesce((select array_agg(distinct f.code || '|' || coalesce(f."column", '')) from record_findings f
				where f.record_id = r.id and f.version = r.version and f.severity = 'warning'), '{}') as keys,
			coalesce((select array_agg(distinct k) from record_reviews v cross join lateral unnest(v.warning_keys) as k
				where v.record_id = r.id and v.decision = 'verified'), '{}') as accepted
		from records r left join review_queue q on q.record_id = r.id
		where r.id = any(${ids}::bigint[])`.execute(trx);

	// A newer version ends every pending return of these records.
	await sql`
		update record_reviews v set cleared_at = now(), cleared_by_version = r.version
		from records r
		where r.id = v.record_id and r.id = any(${ids}::bigint[]) and v.decision = 'returned' and v.cleared_at is null
			and v.version < r.version`.execute(trx);

	const up: Array<{ id: string; district: number; version: number; status: QueueStatus; reopen: boolean }> = [];
	for (const r of rows) {
		if (r.q_version === r.version) continue; // not a new version (e.g. a verification outcome)
		const status = statusAfterNewVersion(r.keys, new Set(r.accepted), r.q_status !== null);
		if (status === null) continue;
		up.push({ id: r.id, district: r.district_id, version: r.version, status, reopen: status === 'open' && r.q_status !== 'open' });
	}
	if (up.length === 0) return;
	await sql`
		insert into review_queue (record_id, district_id, version, status, opened_at, updated_at)
		select u.id, u.district, u.version, u.status, now(), now()
		from unnest(${up.map((u) => u.id)}::bigint[], ${up.map((u) => u.district)}::int[], ${up.map((u) => u.version)}::int[],
			${up.map((u) => u.status)}::text[], ${up.map((u) => u.reopen)}::boolean[]) as u(id, district, version, status, reopen)
		on conflict (record_id) do update set version = excluded.version, status = excluded.status, updated_at = now(),
			opened_at = case when review_queue.status = 'open' and excluded.status = 'open' then review_queue.opened_at else now() end`.execute(trx);
}

// --- reading the queue ---------------------------------------------------------------------------------

export interface ReviewFilters {
	district: string | null;
	practice: string | null;
	code: string | null;
	/** Only items at least this many days in the queue. */
	minAgeDays: number | null;
	/** Only items at most this many days in the queue. */
	maxAgeDays: number | null;
	/** Default `open`; `all` for every status. */
	status: ReviewStatus | 'all';
}

const ReviewCursor = z.object({ t: z.string().max(40), id: z.string().regex(/^[0-9]{1,18}$/) });

const decisionView = (d: {
	id: string;
	decision: 'verified' | 'returned';
	comment: string;
	version: number;
	decided_at: Date;
	cleared_at: Date | null;
	name: string | null;
	actor: string;
}): ReviewDecisionView => ({
	id: String(d.id),
	decision: d.decision,
	comment: d.comment,
	version: d.version,
	decided_by: d.name ?? d.actor,
	decided_at: new Date(d.decided_at).toISOString(),
	cleared_at: d.cleared_at ? new Date(d.cleared_at).toISOString() : null
});

function queueQuery(db: Db) {
	return db
		.selectFrom('review_queue as q')
		.innerJoin('records as r', 'r.id', 'q.record_id')
		.innerJoin('districts as d', 'd.id', 'q.district_id')
		.select([
			'q.record_id',
			'q.status',
			'q.opened_at',
			'q.last_review_id',
			'r.version',
			'r.local_id',
			'r.practice_code',
			'd.code as district_code',
			'd.name as district_name',
			sql<string>`to_char(q.opened_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`.as('opened_key')
		]);
}

/** Decorates queue rows with their current warnings and last decisions (two queries for the whole page). */
async function decorate(
	db: Db,
	rows: Array<{
		record_id: string;
		status: ReviewStatus;
		opened_at: Date;
		last_review_id: string | null;
		version: number;
		local_id: string;
		practice_code: string;
		district_code: string;
		district_name: string;
	}>
): Promise<ReviewItem[]> {
	if (rows.length === 0) return [];
	const ids = rows.map((r) => String(r.record_id));
	const findings = await sql<{ record_id: string; code: string; column: string | null; value: string | null; message: string }>`
		select f.record_id::text as record_id, f.code, f."column", f.value, f.message
		from record_findings f join records r on r.id = f.record_id and r.version = f.version
		where f.record_id = any(${ids}::bigint[]) and f.severity = 'warning' order by f.record_id, f.code`.execute(db);
	const reviewIds = rows.map((r) => r.last_review_id).filter((x): x is string => x !== null);
	const reviews = reviewIds.length
		? await db
				.selectFrom('record_reviews as v')
				.leftJoin('users as u', 'u.id', 'v.decided_by_user_id')
				.select(['v.id', 'v.record_id', 'v.decision', 'v.comment', 'v.version', 'v.decided_at', 'v.cleared_at', 'v.actor', 'u.name'])
				.where('v.id', 'in', reviewIds)
				.execute()
		: [];
	const byRecord = new Map<string, ReviewItem['warnings']>();
	for (const f of findings.rows) {
		const list = byRecord.get(f.record_id) ?? [];
		list.push({ code: f.code, column: f.column, value: f.value, message: f.message });
		byRecord.set(f.record_id, list);
	}
	const reviewById = new Map(reviews.map((v) => [String(v.id), v]));
	const now = Date.now();
	return rows.map((r) => {
		const v = r.last_review_id ? reviewById.get(String(r.last_review_id)) : undefined;
		return {
			record_id: String(r.record_id),
			district: { code: r.district_code, name: r.district_name },
			local_id: r.local_id,
			practice_code: r.practice_code,
			version: r.version,
			status: r.status,
			opened_at: new Date(r.opened_at).toISOString(),
			age_days: Math.max(0, Math.floor((now - new Date(r.opened_at).getTime()) / 86_400_000)),
			warnings: byRecord.get(String(r.record_id)) ?? [],
			last_decision: v ? decisionView(v) : null,
			links: { record: `/api/v1/records/${r.record_id}` }
		};
	});
}

/** The queue, oldest first (the longest-waiting record on top). */
export async function listReviews(principal: Principal, url: URL, f: ReviewFilters, limit: number): Promise<Page<ReviewItem>> {
	const db = getDb();
	const districtId = await readableDistrictId(db, principal, f.district);
	const cursor = decodeCursor(url.searchParams.get('cursor'), ReviewCursor);
	let q = queueQuery(db);
	if (f.status !== 'all') q = q.where('q.status', '=', f.status);
	if (districtId !== null) q = q.where('q.district_id', '=', districtId);
	if (f.practice) q = q.where('r.practice_code', '=', f.practice);
	if (f.code) {
		const code = f.code;
		q = q.where(({ exists, selectFrom }) =>
			exists(
				selectFrom('record_findings as f')
					.select(sql`1`.as('one'))
					.whereRef('f.record_id', '=', 'r.id')
					.whereRef('f.version', '=', 'r.version')
					.where('f.code', '=', code)
			)
		);
	}
	if (f.minAgeDays !== null) q = q.where('q.opened_at', '<=', sql<Date>`now() - make_interval(days => ${f.minAgeDays})`);
	if (f.maxAgeDays !== null) q = q.where('q.opened_at', '>', sql<Date>`now() - make_interval(days => ${f.maxAgeDays + 1})`);
	if (cursor)
		q = q.where((eb) =>
			eb.or([
				eb('q.opened_at', '>', sql<Date>`${cursor.t}::timestamptz`),
				eb.and([eb('q.opened_at', '=', sql<Date>`${cursor.t}::timestamptz`), eb('q.record_id', '>', cursor.id)])
			])
		);
	const rows = await q
		.orderBy('q.opened_at', 'asc')
		.orderBy('q.record_id', 'asc')
		.limit(limit + 1)
		.execute();
	const kept = rows.slice(0, limit);
	const items = await decorate(db, kept);
	const byId = new Map(items.map((i) => [i.record_id, i]));
	return toPage(
		url,
		rows,
		limit,
		(r) => ({ t: r.opened_key, id: String(r.record_id) }),
		(r) => byId.get(String(r.record_id))!
	);
}

/** How many records wait for a decision (queue status `open`), in one district or (null) all of them. */
export async function openReviewCount(db: Db, districtId: number | null): Promise<number> {
	let q = db
		.selectFrom('review_queue')
		.select((eb) => eb.fn.countAll<string>().as('n'))
		.where('status', '=', 'open');
	if (districtId !== null) q = q.where('district_id', '=', districtId);
	return Number((await q.executeTakeFirstOrThrow()).n);
}

/** Every decision on one record, newest first. */
export async function reviewHistory(db: Db, recordId: string): Promise<ReviewDecisionView[]> {
	const rows = await db
		.selectFrom('record_reviews as v')
		.leftJoin('users as u', 'u.id', 'v.decided_by_user_id')
		.select(['v.id', 'v.decision', 'v.comment', 'v.version', 'v.decided_at', 'v.cleared_at', 'v.actor', 'u.name'])
		.where('v.record_id', '=', recordId)
		.orderBy('v.id', 'desc')
		.execute();
	return rows.map(decisionView);
}

/** The queue status of one record (null when it never had warnings). */
export async function reviewStatusOf(db: Db, recordId: string): Promise<ReviewStatus | null> {
	const r = await db.selectFrom('review_queue').select('status').where('record_id', '=', recordId).executeTakeFirst();
	return r?.status ?? null;
}

/** Returned records of a district whose return still stands (no newer version yet), newest first. */
export async function pendingReturns(db: Db, districtId: number) {
	const rows = await db
		.selectFrom('record_reviews as v')
		.innerJoin('records as r', 'r.id', 'v.record_id')
		.leftJoin('users as u', 'u.id', 'v.decided_by_user_id')
		.select(['v.id', 'v.record_id', 'v.comment', 'v.version', 'v.decided_at', 'r.local_id', 'r.practice_code', 'u.name'])
		.where('r.district_id', '=', districtId)
		.where('v.decision', '=', 'returned')
		.where('v.cleared_at', 'is', null)
		.orderBy('v.id', 'desc')
		.limit(100)
		.execute();
	return rows.map((r) => ({
		id: String(r.id),
		record_id: String(r.record_id),
		local_id: r.local_id,
		practice_code: r.practice_code,
		version: r.version,
		comment: r.comment,
		decided_by: r.name ?? 'the state program',
		decided_at: new Date(r.decided_at).toISOString()
	}));
}

// --- deciding ---------------------------------------------------------------------------------------------

function notFound(): ApiError {
	return new ApiError({ status: 404, type: 'record-not-found', detail: 'There is no such record.' });
}

export interface DecisionResult {
	review: ReviewDecisionView;
	status: ReviewStatus;
	mailed_to: number;
}

export async function decideReview(principal: Principal, recordId: string, input: ReviewDecisionInput): Promise<DecisionResult> {
	if (principal.role !== 'manager') throw new ApiError({ status: 403, detail: 'Only the state program manager decides reviews.' });
	if (!/^[1-9][0-9]{0,17}$/.test(recordId)) throw notFound();
	const db = getDb();
	return db.transaction().execute(async (trx) => {
		const rec = await trx
			.selectFrom('records as r')
			.innerJoin('districts as d', 'd.id', 'r.district_id')
			.select(['r.id', 'r.version', 'r.local_id', 'r.practice_code', 'r.district_id', 'd.name as district_name', 'd.code as district_code'])
			.where('r.id', '=', recordId)
			.executeTakeFirst();
		if (!rec) throw notFound();
		const queued = await trx.selectFrom('review_queue').selectAll().where('record_id', '=', recordId).forUpdate().executeTakeFirst();
		if (!queued || queued.status === 'cleared')
			throw new ApiError({
				status: 409,
				type: 'nothing-to-review',
				detail: `Record ${rec.local_id} carries no warnings in its current version; there is nothing to decide.`
			});
		const keys = await sql<{ k: string }>`
			select distinct f.code || '|' || coalesce(f."column", '') as k from record_findings f
			where f.record_id = ${recordId} and f.version = ${rec.version} and f.severity = 'warning' order by 1`.execute(trx);
		const review = await trx
			.insertInto('record_reviews')
			.values({
				record_id: recordId,
				version: rec.version,
				decision: input.decision,
				comment: input.comment,
				warning_keys: keys.rows.map((r) => r.k),
				decided_by_user_id: principal.userId,
				actor: actorOf(principal)
			})
			.returning(['id', 'decision', 'comment', 'version', 'decided_at', 'cleared_at', 'actor'])
			.executeTakeFirstOrThrow();
		// An earlier pending return of the same version is superseded by this decision.
		await trx
			.updateTable('record_reviews')
			.set({ cleared_at: sql`now()` as unknown as Date, cleared_by_version: rec.version })
			.where('record_id', '=', recordId)
			.where('decision', '=', 'returned')
			.where('cleared_at', 'is', null)
			.where('id', '<>', review.id)
			.execute();
		await trx
			.updateTable('review_queue')
			.set({ status: input.decision, version: rec.version, last_review_id: review.id, updated_at: sql`now()` as unknown as Date })
			.where('record_id', '=', recordId)
			.execute();
		await recordAudit(trx, {
			action: input.decision === 'verified' ? 'review-verified' : 'review-returned',
			actor: principal,
			detail: { record_id: recordId, local_id: rec.local_id, district: rec.district_code, version: rec.version, comment: input.comment }
		});
		let mailed = 0;
		if (input.decision === 'returned') {
			const users = await trx
				.selectFrom('users')
				.select('email')
				.where('district_id', '=', rec.district_id)
				.where('role', '=', 'district')
				.where('active', '=', true)
				.orderBy('id')
				.execute();
			const to = users.map((u) => u.email);
			if (to.length > 0) {
				mailed = to.length;
				await queueMail(
					trx,
					composeMail('record-returned', to, `Record ${rec.local_id} was returned for correction`, {
						heading: `Record ${rec.local_id} needs a correction`,
						paragraphs: [
							`The state program manager reviewed practice record ${rec.local_id} (practice ${rec.practice_code}, version ${rec.version}) of ${rec.district_name} and returned it with this comment:`,
							input.comment,
							'Correct the record in your own system and send it again (a batch upload or the API). The return is cleared when the new version arrives.'
						],
						action: { label: 'Open the record', url: new URL(`/records/${recordId}`, config.origin).href },
						footnote: 'You get this message because you report practice records for this district in Runnel.'
					})
				);
			}
		}
		return { review: decisionView({ ...review, name: principal.name }), status: input.decision, mailed_to: mailed };
	});
}
